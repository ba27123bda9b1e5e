// Package conserve checks coupling maps: the audit of DESIGN.md §5. For a map W from a
// source (measure m_s) to a target (measure m_t) — rows are targets, columns sources —
// it measures
//
//  1. conservation: column sums c_s = Σ_t m_t W_ts / m_s over fully covered sources
//     (coverage ≥ 1 − CoverageTol, or all when the coverage is unknown), their largest
//     defect |c_s − 1|, where, a histogram, and the global mass budget
//     Σ_t m_t (W f)_t against Σ_s m_s f_s on test fields;
//  2. consistency: row sums Σ_s W_ts over covered targets;
//  3. bounds: negative weights and new extrema (local: outside the range of the source
//     values a row uses; global: outside the whole source range);
//  4. adjoint pairs: a prolongation P against W* = M_s⁻¹ Wᵀ M_t (Adjoint), the four
//     properties (W, P conservative and consistent) and the identity
//     ⟨Wx, y⟩_t = ⟨x, W*y⟩_s;
//  5. round trips R = P∘W (dynamics side) and W∘P (physics side): mass, constants,
//     idempotence;
//  6. noise and damping: an exact Fourier analysis on doubly periodic planes
//     (FourierAnalysis: response per wavenumber, grid-scale share of the output for
//     smooth inputs, the restriction's symbol and its invisible modes); on the sphere a
//     documented graph-Laplacian high-pass filter (HighPassTo, SphereNoise); the null
//     space of the restriction by dense SVD or Lanczos (NullSpace);
//  7. accuracy: l1, l2, l∞ errors normalised as in Williamson et al. (1992) on exact cell
//     means of analytic fields (CellMeansTo, CheckAccuracy), and observed convergence
//     orders over a family of resolutions (Convergence);
//  8. gates: Thresholds turn numbers into a verdict (Report.Passed, Report.Failures);
//  9. reports: WriteText, WriteJSON, Plots, WriteHTML and WriteReportDir.
//
// Audit runs everything that the map and the Options allow and returns a Report; the
// command is a thin layer: options in, report out, one renderer. All sums that decide a
// conservation claim are compensated (Neumaier), so defects of 1e-16 are real numbers,
// not rounding of the check. The low-level checks are exported for the tests of the
// packages that build maps.
//
// # Conventions
//
// Wavelengths are in grid lengths. On a periodic plane the grid length is the lattice
// spacing (dx, dy) of the dynamics mesh's translation lattice, and a mode e^{ik·x} has
// wavelength 2π/|(kx·dx, ky·dy)|; on the sphere it is √(mean cell area), and the degree-l
// harmonics have wavelength 2πR/√(l(l+1)). Smooth means at least 8 grid lengths, grid
// scale at most 3 (FourierOptions). Norms of vectors are in the measure of their side:
// ‖x‖² = Σ m x².
//
// # JSON report (schema "colbridge.audit/1")
//
// WriteJSON writes one object. Every key below is always present; a section that was not
// computed is null and a note in "notes" says why. Numbers are JSON numbers (never NaN);
// indices are 0-based; defects and errors are dimensionless unless stated. Keys are only
// added within a schema version, never removed or renamed.
//
//	schema                    "colbridge.audit/1"
//	method, order             the map's method name and formal order
//	source, target            objects describing the two sides:
//	  mesh, fingerprint       mesh name and fingerprint ("" when unknown)
//	  location                "cell", "edge-normal/layer", ...
//	  size                    degrees of freedom
//	  has_measure             whether measures are known; measure_total their sum
//	  has_coverage            whether coverages are known; fully_covered the count with
//	                          coverage ≥ 1 − 1e-12 (all when unknown)
//	sources, targets, entries matrix columns, rows, stored entries
//	conservation_max_defect   max |c_s − 1| over fully covered sources with m_s > 0;
//	                          null when a measure is unknown
//	consistency_max_defect    max |row sum − 1| over covered targets
//	negative_weights          number of entries < 0
//	passed                    true when no gate failed
//	vector_component          true for one component of a vector map (a side at
//	                          edge-normal or edge-tangential): scalar conservation,
//	                          consistency and bounds are shown but not gated
//	failures                  list of {gate, key, value (null if not measured), limit,
//	                          reason}
//	conservation              null without measures, else:
//	  checked, skipped_partial, skipped_zero_measure   source counts
//	  max_defect, max_defect_at, column_sum_at_max     largest |c_s − 1|, its source,
//	                                                   c_s there (−1 index: none)
//	  rms_defect                                        root mean square of c_s − 1
//	  histogram        {log10_edges: [−17 … 1], counts (one per decade), zero, below,
//	                   above}: counts of |c_s − 1| per decade, exact zeros, < 1e-17, ≥ 10
//	  fields           list of {name, source_integral Σ m_s κ_s f_s, target_integral
//	                   Σ m_t (Wf)_t, relative_error (target − source)/Σ m_s κ_s |f_s|}
//	                   for "constant", "random" and the positional test fields
//	  max_mass_error   largest |relative_error|
//	consistency
//	  checked, skipped, empty_rows                      target counts
//	  max_defect, max_defect_at, row_sum_at_max, rms_defect, histogram   as above
//	bounds
//	  negative_weights, most_negative, most_negative_row, most_negative_col
//	  fields           list of {name, source_min, source_max, target_min, target_max,
//	                   local_violations, max_local_overshoot, max_local_at,
//	                   global_violations, max_global_overshoot}; overshoots are divided
//	                   by max|f_s|, violations count overshoots > 1e-12
//	  max_local_overshoot, max_global_overshoot          over all fields
//	pair                      null unless a prolongation P is given:
//	  relative_difference      ‖P − W*‖_F / ‖W*‖_F
//	  max_entry_difference, max_entry_row, max_entry_col  largest |P − W*| entry
//	  restriction_conservation, restriction_consistency,
//	  prolongation_conservation, prolongation_consistency   the four defects
//	  adjoint_consistency      row-sum defect of W* (= restriction_conservation)
//	  adjoint_conservation     column-sum defect of W* (= restriction_consistency)
//	  adjoint_identity_defect  max |⟨Wx,y⟩_t − ⟨x,Py⟩_s| / (‖Wx‖‖y‖ + ‖x‖‖Py‖)
//	  probes                   random pairs used
//	round_trip                null when there is neither P nor measures:
//	  prolongation             "given" or "adjoint"
//	  dynamics, physics        R = P∘W and W∘P: {constant_defect, fields (as above,
//	                           before/after on one side), max_mass_error,
//	                           idempotence_defect max ‖R²x − Rx‖/‖x‖}
//	  physics_identity_defect  max ‖W(Py) − y‖/‖y‖
//	  idempotence_expected     physics_identity_defect ≤ 1e-10 (then R is a projection)
//	  probes
//	fourier                   null unless spectral analysis ran on a periodic plane:
//	  nx, ny, cells_per_lattice_cell, dx, dy, modes   the translation lattice
//	  smooth_wavelength, grid_wavelength               limits used (8, 3)
//	  constant_response                                amplitude kept at k = 0
//	  response_2dx, checkerboard_response              at (π/dx, 0) and (π/dx, π/dy),
//	                                                   null when not on the lattice
//	  smooth_min_response, grid_max_response           worst damping of smooth modes,
//	                                                   largest survival of grid modes
//	  noise_max, noise_max_wavelength, noise_mean      grid-scale share of the output
//	                                                   norm over smooth inputs
//	  damping          list of {wavelength_min, wavelength_max, modes, response_min,
//	                   response_mean, response_max} in bands a factor √2 wide
//	  symbol           null when skipped, else {blocks, largest_block, threshold,
//	                   max_singular_value, smallest (≤ 16 relative values),
//	                   invisible_dimension, invisible_fourier_modes,
//	                   smoothest_invisible_wavelength}
//	sphere_noise              null unless spectral analysis ran on the sphere:
//	  grid_length (m), filter_power, smooth_max_degree, members,
//	  input_share_max, output_share_max, output_share_mean
//	  damping          list of {degree, wavelength, response}
//	null_space                null unless spectral analysis ran:
//	  method ("dense-svd" | "lanczos"), threshold, dimension, exact, capped,
//	  max_singular_value, smallest, worst_mode_singular_value, worst_mode_roughness,
//	  worst_mode_max_at, steps, restarts
//	accuracy                  null unless both sides are cell meshes:
//	  quadrature       Gauss–Legendre order per direction of the exact cell means
//	  sampled_targets  targets the norms were computed on (an evenly spaced sample of
//	                   at most Options.AccuracySample, 20,000 by default, on large maps)
//	  fields           list of {name, l1, l2, linf, linf_at}
//	  max_l1, max_l2, max_linf
//	convergence               null unless attached by the caller (Convergence):
//	  fields           list of {name, h, l1, l2, linf, order_l1, order_l2, order_linf
//	                   (null when undefined)}
//	notes                     list of strings: checks skipped and why
//
// # Plots
//
// Plots renders PNG figures with gonum/plot: damping.png (response against wavelength),
// defects.png (histogram of log10 |defect|), error_map.png (local error on the target
// cells, in longitude–latitude or x–y), noise_spectrum.png (periodic planes) and
// null_mode.png (the worst invisible mode). WriteReportDir writes them with audit.json,
// audit.txt and an index.html page, each file through a temporary name.
//
// References:
//   - Williamson, D. L., Drake, J. B., Hack, J. J., Jakob, R. & Swarztrauber, P. N.
//     (1992), A standard test set for numerical approximations to the shallow water
//     equations in spherical geometry, J. Comput. Phys. 102:211–224 (error norms).
//   - Jones, P. W. (1999), First- and second-order conservative remapping schemes for
//     grids in spherical coordinates, Mon. Wea. Rev. 127:2204–2210.
//   - Ullrich, P. A. & Taylor, M. A. (2015), Arbitrary-order conservative and consistent
//     remapping and a theory of linear maps, Mon. Wea. Rev. 143:2419–2440 (conservation
//     and consistency of linear maps, test fields).
//   - Arakawa, A. & Konor, C. S. (1996), Vertical differencing of the primitive
//     equations based on the Charney–Phillips grid in hybrid σ–p vertical coordinates,
//     Mon. Wea. Rev. 124:511–528 (the vertical computational mode).
package conserve
