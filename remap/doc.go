// Package remap builds the maps of a dynamics–physics coupling: horizontal maps between any
// two meshes on the same surface, the staggered maps from edges and vertices to columns and
// back, vertical maps between level sets, coupling plans and bundles, and the application
// of maps to fields.
//
// # The supermesh
//
// ComputeOverlaps intersects every source cell with every target cell it meets. On the
// sphere a cell is the intersection of half-spaces {x : m·x ≥ d} bounded by great circles
// (d = 0) and, for latitude–longitude cells, parallels (m = ±z); the source cell is
// clipped against the target cell's half-spaces by Sutherland–Hodgman in 3-D, so there is
// no longitude or latitude arithmetic and the poles and the date line are ordinary cases.
// Where a small circle is involved an edge may cross a plane twice; both crossings are
// found. Great-circle planes are applied before parallels, so a polar cap never lies
// wholly inside the remaining polygon. Non-convex target cells are split into triangles
// first. On the plane the same is done with lines, with periodic wrap.
//
// Consistency is what conservation needs: every half-plane is computed once per mesh edge
// and negated for the edge's second cell, every supermesh vertex is computed from mesh
// data only (a crossing of two mesh edges from the original end points; a vertex of a
// clipping cell is that mesh vertex), so neighbouring pieces share bit-identical vertices
// and nothing is counted twice or lost. For full coverage the pieces of every cell sum to
// its area within ≤ 5e-14 relative on the test meshes (the issue asks 1e-12). Pieces
// smaller than SliverShare of their cells are rounding artefacts of shared edges and are
// dropped.
//
// Areas are exact for the polygons: signed geodesic triangles on vertex differences plus
// the exact segment between each parallel and its chord (grids/sphere). Candidates come
// from an advancing front: the target cell holding the source centroid is found by a walk
// across edges, then edge neighbours of every overlapping target are visited, so the cost
// is proportional to the number of pieces. A k-d tree takes over for regional meshes.
//
// # Horizontal methods (Build)
//
//   - Conservative, order 1: W_ts = |s ∩ t| / |t| (Jones 1999).
//   - Conservative, order 2: a least-squares gradient per source cell integrated over the
//     pieces with their first moments, in 3-D (see buildConservative).
//   - Conservative, orders 3 and 4: polynomial reconstructions on a patch, integrated over
//     the pieces by quadrature (Ullrich & Taylor 2015 give the theory of such maps).
//   - Interpolate, order 1: barycentric, mean-value and bilinear weights at the column
//     points.
//   - Nearest.
//
// Every map carries the measures and coverage of both sides. Partly covered targets are
// divided by their covered part (ByCovered: constants kept) or by their whole area
// (ByWhole: the covered integral kept); uncovered targets keep empty rows and coverage 0,
// so an apply step writes the fill value there, never a silent zero. Maps are built in
// parallel and do not depend on the number of workers.
//
// # Staggered and vertical maps, plans
//
// CellVectorFromEdges, ColumnWinds, AveragedEdgeNormal, CellFromVertices, BuildFESpace and
// Adjoint build the staggered maps (see their documentation for inner products and
// measured accuracy); NewVerticalMap the vertical ones (see VerticalMethod). ReadPlan and
// BuildBundle turn a coupling plan into a bundle directory.
//
// # Applying maps to field files
//
// NewMapApplier loads one map file, NewBundleApplier every map of a bundle; the Applier's
// ApplyFile maps one file and ApplyFiles many (a pool of files in flight, each output in
// an output directory under its input's name). The command `colbridge apply` is a thin
// layer over ApplyFiles.
//
// Which variables. For a bundle, the variables its entries name: restrictions read the
// plan variable (u, theta ...) and write the column variables (u_east and u_north for a
// vector); prolongations read the column variables and write the plan variable, summing
// the components of a vector into one edge field. The direction is told from the file's
// mesh (the colbridge_fingerprint of its UGRID topology, else which direction's variables
// it holds with the right sizes) or given. For a map file, every numeric variable whose
// last dimension has the map's source size, that is not part of the mesh topology, not a
// coordinate, bounds or cell-measure variable, and whose UGRID location attribute (if
// any) matches the map's source. ApplyOptions.Vars overrides both.
//
// Accepted layouts: the horizontal dimension last (CF/UGRID order), the level dimension
// of a 3-D field just before it with the source's number of layers or interfaces, and
// any number of leading dimensions before that, each slice of which is mapped on its own:
//
//	(cell)  (time, cell)  (time, member, cell)            2-D fields
//	(lev, cell)  (time, lev, cell)  (time, ilev, edge)    3-D fields of a bundle
//
// For a map file every dimension but the last is a leading one (levels are mapped one by
// one). Layouts with the horizontal dimension elsewhere are refused with the variable's
// dimensions in the message. float32, float64 and integer inputs are read; packed values
// (scale_factor, add_offset) are unpacked; outputs are float32 for float32 inputs and
// float64 otherwise, or as ApplyOptions.Type says.
//
// How. Horizontal and vertical factors are applied as stored, never expanded: the
// vertical factor level by level in NetCDF order, then the horizontal one to all levels
// and records of a chunk at once (MultiApplyTo). Vertical factors are rebuilt from the
// manifest's levels and must match the stored matrices. A mass-weighted entry
// (MeasureVariable, e.g. layer_mass in kg m⁻², per unit area) reads the measure from the
// same file and weighs both steps: the vertical one through VerticalMap.ApplyColumnsTo
// with each column's layer masses, the horizontal one as q_t = H(m′q)/H(m′) with m′ the
// target layer masses; the mapped measure H(m′) is written under the measure's name too,
// so Σ A m q over the globe is kept (to 1e-13, tested on the 1976 standard atmosphere)
// and the output is self-consistent. A prolongation whose vertical factor is the adjoint
// of a conservative restriction weighs by the layer masses of the dynamics levels; given
// a file that holds its measure on its own (column) layers instead, the conservative map
// back with those masses is used, which is the same map for the coordinate measure.
//
// Values. Missing sources — the _FillValue (or the type's default fill), missing_value,
// NaN, and field values whose measure is missing or not positive — spoil exactly the
// targets whose rows (horizontal, and vertical through the factor's pattern) use them;
// those become the output's _FillValue and are counted (VarResult.Missing, and
// MissingSources for the inputs). Targets no source covers (empty rows, coverage 0) get
// the fill value too (VarResult.Uncovered). With ApplyOptions.Bounds, clip-and-assured-sum
// (Bradley, Bosler, Guba et al. 2019) keeps every scalar target within the range of the
// source values its row uses while keeping each slice's integral (area, or mass for
// weighted fields); it changes nothing where a map's weights are non-negative and rows
// sum to one, so it matters for order 2 and above.
//
// Outputs carry the target mesh: its UGRID topology copied from the mesh file (the
// bundle's, found beside the bundle by fingerprint, or ApplyOptions.TargetMesh), or else
// a topology variable that names the mesh by colbridge_name and colbridge_fingerprint
// without geometry. Each mapped variable has mesh and location attributes, its input's
// CF attributes (units, standard_name, long_name, cell_methods ...; not valid_range,
// missing_value or packing), a _FillValue, colbridge_method (e.g. "conservative order 2 ⊗
// vertical-conservative, weighted by layer_mass"), colbridge_maps (entries and files) and
// both meshes' (and levels') fingerprints. Time and other variables off the source mesh
// are copied; a new level dimension ("layer" or "interface") gets a coordinate variable;
// global attributes are copied and a line is appended to history.
//
// Streaming. A file is cut into chunks of whole records along its leading dimensions,
// each one hyperslab, sized so that two chunks being read, one being computed and two
// being written fit ApplyOptions.Memory (after the maps and a fixed 96 MiB for the
// program, the NetCDF library and its chunk caches) and no chunk's input exceeds 32 MiB.
// One goroutine reads, one computes (on all cores), one writes; ncio serialises the
// NetCDF calls on its own goroutine. A record too large for the budget is refused with
// the size it needs. Measured peak resident sets stay under the budget (117 MiB at
// --memory 128MiB, 134 MiB at 160MiB, about 210 MiB at 512MiB on a 1 GB file). Outputs
// with an unlimited dimension or deflate are chunked by whole records (at most 16 MiB a
// chunk, written whole).
//
// Safety. Outputs are written under a temporary name and renamed when complete (ncio):
// an error, a full disk or a killed process leaves nothing under the final name (tested
// with an injected write fault and SIGKILL). An output that would replace an input, a
// map or the mesh file — by path, symbolic link or hard link — is refused; so is a map
// whose source mesh (fingerprint, else sizes) differs from the file's, naming both.
//
// Speed (benchmarks on the project's 2-core machine, medians, load average 1.2–1.5):
// the arithmetic of a cubed-sphere N=96 → 1° map moves about 6 GB/s of fields in and out
// for order 1 and 3.2 GB/s for order 2 (BenchmarkApplyKernel), where a memory copy moves
// 30 GB/s on one core and 54 GB/s on two: it is bound by the scattered loads of sparse
// rows in scalar code, not by memory bandwidth. End to end, a 1.06 GB file takes 3.4 s
// (order 1) and 4.2 s (order 2) where nccopy takes 1.2 s, or 1.9 s with an fsync of its
// output (BenchmarkApplyEndToEnd in cmd/colbridge): the single-threaded NetCDF library
// reads and writes at nccopy's pace on one core (the output is 17% larger), Commit's
// fsync adds about 0.8 s, and the arithmetic shares the two cores with it.
//
// References:
//   - Jones, P. W. (1999), First- and second-order conservative remapping schemes for grids
//     in spherical coordinates, Mon. Wea. Rev. 127:2204–2210.
//   - Ullrich, P. A. & Taylor, M. A. (2015), Arbitrary-order conservative and consistent
//     remapping and a theory of linear maps, Mon. Wea. Rev. 143:2419–2440.
//   - Perot, J. B. (2000), Conservation properties of unstructured staggered mesh schemes,
//     J. Comput. Phys. 159:58–89.
//   - Colella, P. & Woodward, P. R. (1984), The piecewise parabolic method (PPM) for
//     gas-dynamical simulations, J. Comput. Phys. 54:174–201.
package remap
