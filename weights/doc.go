// Package weights holds colbridge's sparse matrices and the maps built from them: the CSR
// matrix (rows are targets, columns are sources), Map (matrix plus metadata: locations,
// method, order, measures, coverage, mesh fingerprints, provenance), the map file, Matrix
// Market import and export, and the bundle manifest.
//
// # The map file
//
// A map is stored as a NetCDF-4 file that ncdump reads. Layout (CDL):
//
//	dimensions:
//		row_offsets = <targets + 1> ;
//		entries = <stored weights> ;
//		sources = <source degrees of freedom> ;
//		targets = <target degrees of freedom> ;
//	variables:
//		int64 row_start(row_offsets) ;     // CSR offsets: row t holds entries row_start[t] .. row_start[t+1]-1
//		int col_index(entries) ;           // 0-based source index of each entry
//		double weight(entries) ;           // the weight W[t, col_index]
//		double source_measure(sources) ;   // optional: area (m²) or other measure per source
//		double target_measure(targets) ;   // optional
//		double source_coverage(sources) ;  // optional: covered fraction per source
//		double target_coverage(targets) ;  // optional: covered fraction per target (0: uncovered)
//	// global attributes:
//		:colbridge_map_format = "colbridge-map-1" ;
//		:title, :method, :order, :normalization ;
//		:source_location, :target_location ;          // e.g. "cell", "edge-normal/layer"
//		:source_mesh, :source_mesh_fingerprint ;      // name and grids.Mesh fingerprint
//		:target_mesh, :target_mesh_fingerprint ;
//		:colbridge_version, :command, :created ;      // provenance (created: RFC 3339 UTC)
//		:attr_<key> ;                                 // Map.Attrs entries
//
// Rows are stored in order and each row's columns increase, so a reader can stream the
// file and apply it without sorting. Writing goes to a temporary name that is renamed when
// the file is complete: a map file is never seen half written.
//
// # Guarantees
//
// CSR.ApplyTo sums each row in storage order, so results are identical for any number of
// goroutines. RowSumsTo and ColSumsTo use Neumaier compensated summation: their error is
// about one rounding of the result whatever the number of terms, so conservation defects
// of 1e-15 can be told from 1e-13.
package weights
