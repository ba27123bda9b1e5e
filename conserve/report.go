package conserve

import "github.com/colbridge/colbridge/grids"

// SchemaVersion names the layout of the JSON report. It changes only when a key is removed
// or changes meaning; new keys may be added without changing it.
const SchemaVersion = "colbridge.audit/1"

// Report is the result of an audit. Every section is documented key by key in the package
// documentation (doc.go), which is the stable JSON schema. Sections that were not run are
// nil and appear as JSON null; Notes says why.
//
// Fields tagged `json:"-"` carry per-degree-of-freedom data for the plots; they are not
// part of the JSON report.
type Report struct {
	Schema string   `json:"schema"`
	Method string   `json:"method"`
	Order  int      `json:"order"`
	Source SideInfo `json:"source"`
	Target SideInfo `json:"target"`

	Sources int `json:"sources"`
	Targets int `json:"targets"`
	Entries int `json:"entries"`

	// ConservationMaxDefect is Conservation.MaxDefect, nil when the measures are unknown.
	ConservationMaxDefect *float64 `json:"conservation_max_defect"`
	// ConsistencyMaxDefect is Consistency.MaxDefect.
	ConsistencyMaxDefect float64 `json:"consistency_max_defect"`
	// NegativeWeights is Bounds.NegativeWeights.
	NegativeWeights int `json:"negative_weights"`

	Passed   bool      `json:"passed"`
	Failures []Failure `json:"failures"`
	// VectorComponent is true for one component of a vector map (a side at edge-normal or
	// edge-tangential locations): conservation, consistency and bounds of scalar fields
	// are measured but not gated, since its weights mix directions.
	VectorComponent bool `json:"vector_component"`

	Conservation *ConservationReport `json:"conservation"`
	Consistency  ConsistencyReport   `json:"consistency"`
	Bounds       BoundsReport        `json:"bounds"`
	Pair         *PairReport         `json:"pair"`
	RoundTrip    *RoundTripReport    `json:"round_trip"`
	Fourier      *FourierReport      `json:"fourier"`
	SphereNoise  *SphereNoiseReport  `json:"sphere_noise"`
	NullSpace    *NullSpaceReport    `json:"null_space"`
	Accuracy     *AccuracyReport     `json:"accuracy"`
	Convergence  *ConvergenceReport  `json:"convergence"`

	Notes []string `json:"notes"`

	// Plot data (not in the JSON).
	sourceMesh, targetMesh *grids.Mesh // the cell meshes of the two sides, or nil
	sourcePts, targetPts   *meshPoints // their drawing data, made when a plot needs it
}

// SideInfo describes one side of the audited map.
type SideInfo struct {
	Mesh        string `json:"mesh"`
	Fingerprint string `json:"fingerprint"`
	Location    string `json:"location"`
	Size        int    `json:"size"`
	HasMeasure  bool   `json:"has_measure"`
	// MeasureTotal is the compensated sum of the measures (0 without measures).
	MeasureTotal float64 `json:"measure_total"`
	HasCoverage  bool    `json:"has_coverage"`
	// FullyCovered counts degrees of freedom with coverage ≥ 1 − CoverageTol (all of them
	// when the coverage is unknown).
	FullyCovered int `json:"fully_covered"`
}

// Histogram counts non-negative defects d on a fixed log₁₀ scale, so reports of different
// maps compare bin by bin: bin i counts 10^Log10Edges[i] ≤ d < 10^Log10Edges[i+1].
type Histogram struct {
	Log10Edges []float64 `json:"log10_edges"`
	Counts     []int     `json:"counts"`
	// Zero counts d = 0 exactly; Below counts 0 < d < 10^Log10Edges[0]; Above counts
	// d ≥ 10^Log10Edges[last].
	Zero  int `json:"zero"`
	Below int `json:"below"`
	Above int `json:"above"`
}

// FieldMass is the global integral of one test field before and after a map.
type FieldMass struct {
	Name string `json:"name"`
	// SourceIntegral is Σ_s m_s κ_s f_s (κ_s the source coverage, 1 when unknown).
	SourceIntegral float64 `json:"source_integral"`
	// TargetIntegral is Σ_t m_t (W f)_t.
	TargetIntegral float64 `json:"target_integral"`
	// RelativeError is (TargetIntegral − SourceIntegral) / Σ_s m_s κ_s |f_s|.
	RelativeError float64 `json:"relative_error"`
}

// ConservationReport is check 1 of DESIGN.md §5.
type ConservationReport struct {
	// Checked counts the fully covered source degrees of freedom with positive measure:
	// the ones whose column sums c_s = Σ_t m_t W_ts / m_s must be 1.
	Checked            int `json:"checked"`
	SkippedPartial     int `json:"skipped_partial"`
	SkippedZeroMeasure int `json:"skipped_zero_measure"`
	// MaxDefect is max |c_s − 1| over the checked columns; MaxDefectAt is its source index
	// (−1 when nothing was checked) and ColumnSumAtMax the c_s there.
	MaxDefect      float64 `json:"max_defect"`
	MaxDefectAt    int     `json:"max_defect_at"`
	ColumnSumAtMax float64 `json:"column_sum_at_max"`
	// RMSDefect is the root mean square of c_s − 1 over the checked columns.
	RMSDefect float64   `json:"rms_defect"`
	Histogram Histogram `json:"histogram"`
	// Fields lists the global mass budget per test field; MaxMassError is the largest
	// |RelativeError|.
	Fields       []FieldMass `json:"fields"`
	MaxMassError float64     `json:"max_mass_error"`

	// Defects holds |c_s − 1| per source (−1 where not checked), for the plots.
	Defects []float64 `json:"-"`
}

// ConsistencyReport is check 2 of DESIGN.md §5.
type ConsistencyReport struct {
	// Checked counts the covered targets (see Options.CoverageTol and the map's
	// normalisation); Skipped the others.
	Checked int `json:"checked"`
	Skipped int `json:"skipped"`
	// EmptyRows counts checked targets without any entry (their row sum is 0).
	EmptyRows int `json:"empty_rows"`
	// MaxDefect is max |Σ_s W_ts − 1| over the checked targets, at target MaxDefectAt
	// (−1 when none) where the row sum is RowSumAtMax.
	MaxDefect   float64   `json:"max_defect"`
	MaxDefectAt int       `json:"max_defect_at"`
	RowSumAtMax float64   `json:"row_sum_at_max"`
	RMSDefect   float64   `json:"rms_defect"`
	Histogram   Histogram `json:"histogram"`

	// Defects holds |row sum − 1| per target (−1 where not checked), for the plots.
	Defects []float64 `json:"-"`
}

// FieldBounds is the extremum check of one test field.
type FieldBounds struct {
	Name string `json:"name"`
	// SourceMin/Max over all source values; TargetMin/Max over the checked targets.
	SourceMin float64 `json:"source_min"`
	SourceMax float64 `json:"source_max"`
	TargetMin float64 `json:"target_min"`
	TargetMax float64 `json:"target_max"`
	// LocalViolations counts targets whose value leaves [min, max] of the source values
	// the row uses (entries ≠ 0) by more than BoundsTol·max|f|. MaxLocalOvershoot is the
	// largest excursion over all targets, divided by max|f_s|, at target MaxLocalAt (−1
	// when there is none).
	LocalViolations   int     `json:"local_violations"`
	MaxLocalOvershoot float64 `json:"max_local_overshoot"`
	MaxLocalAt        int     `json:"max_local_at"`
	// GlobalViolations and MaxGlobalOvershoot: the same against the global source range.
	GlobalViolations   int     `json:"global_violations"`
	MaxGlobalOvershoot float64 `json:"max_global_overshoot"`
}

// BoundsReport is check 3 of DESIGN.md §5.
type BoundsReport struct {
	NegativeWeights int `json:"negative_weights"`
	// MostNegative is the smallest weight when there are negative ones (else 0), at
	// (MostNegativeRow, MostNegativeCol) (−1, −1 when none).
	MostNegative       float64       `json:"most_negative"`
	MostNegativeRow    int           `json:"most_negative_row"`
	MostNegativeCol    int           `json:"most_negative_col"`
	Fields             []FieldBounds `json:"fields"`
	MaxLocalOvershoot  float64       `json:"max_local_overshoot"`
	MaxGlobalOvershoot float64       `json:"max_global_overshoot"`
}

// PairReport is check 4 of DESIGN.md §5: a restriction W and a prolongation P compared
// with the adjoint W* = M_s⁻¹ Wᵀ M_t.
type PairReport struct {
	// RelativeDifference is ‖P − W*‖_F / ‖W*‖_F; MaxEntryDifference the largest
	// |P_ij − W*_ij|, at (MaxEntryRow, MaxEntryCol) (source row, target column).
	RelativeDifference float64 `json:"relative_difference"`
	MaxEntryDifference float64 `json:"max_entry_difference"`
	MaxEntryRow        int     `json:"max_entry_row"`
	MaxEntryCol        int     `json:"max_entry_col"`
	// The four properties, as defects (0 is exact): W conservative, W consistent,
	// P conservative (Σ_s m_s P_st / m_t = 1), P consistent (row sums of P).
	RestrictionConservation  float64 `json:"restriction_conservation"`
	RestrictionConsistency   float64 `json:"restriction_consistency"`
	ProlongationConservation float64 `json:"prolongation_conservation"`
	ProlongationConsistency  float64 `json:"prolongation_consistency"`
	// AdjointConsistency is the row-sum defect of W*, equal to RestrictionConservation
	// up to rounding (W conservative ⇔ W* consistent); AdjointConservation the
	// column-sum defect of W*, equal to RestrictionConsistency (W consistent ⇔ W*
	// conservative).
	AdjointConsistency  float64 `json:"adjoint_consistency"`
	AdjointConservation float64 `json:"adjoint_conservation"`
	// AdjointIdentityDefect is max over Probes random pairs (x, y) of
	// |⟨Wx, y⟩_t − ⟨x, Py⟩_s| / (‖Wx‖_t‖y‖_t + ‖x‖_s‖Py‖_s).
	AdjointIdentityDefect float64 `json:"adjoint_identity_defect"`
	Probes                int     `json:"probes"`
}

// RoundTripSide is one round trip of check 5.
type RoundTripSide struct {
	// ConstantDefect is max |(R·1)_i − 1| over the covered degrees of freedom.
	ConstantDefect float64 `json:"constant_defect"`
	// Fields: mass before and after the round trip, relative to Σ m |f|.
	Fields       []FieldMass `json:"fields"`
	MaxMassError float64     `json:"max_mass_error"`
	// IdempotenceDefect is max over probes x of ‖R(Rx) − Rx‖_m / ‖x‖_m.
	IdempotenceDefect float64 `json:"idempotence_defect"`
}

// RoundTripReport is check 5 of DESIGN.md §5.
type RoundTripReport struct {
	// Prolongation is "given" (Options.Prolongation) or "adjoint" (W*).
	Prolongation string `json:"prolongation"`
	// Dynamics is R = P∘W on the source side, Physics is W∘P on the target side.
	Dynamics RoundTripSide `json:"dynamics"`
	Physics  RoundTripSide `json:"physics"`
	// PhysicsIdentityDefect is max over probes y of ‖W(Py) − y‖_t / ‖y‖_t; when it is
	// at rounding level, R = P∘W must be idempotent (a projection).
	PhysicsIdentityDefect float64 `json:"physics_identity_defect"`
	// IdempotenceExpected reports whether PhysicsIdentityDefect ≤ 1e-10, i.e. whether
	// Dynamics.IdempotenceDefect must vanish.
	IdempotenceExpected bool `json:"idempotence_expected"`
	Probes              int  `json:"probes"`
}

// Failure is one failed gate.
type Failure struct {
	// Gate is the Thresholds field's flag-style name, e.g. "max-conservation-defect".
	Gate string `json:"gate"`
	// Key is the report key the gate reads, as a dotted JSON path.
	Key string `json:"key"`
	// Value is the measured value (nil when the check did not run) and Limit the
	// threshold.
	Value  *float64 `json:"value"`
	Limit  float64  `json:"limit"`
	Reason string   `json:"reason"`
}

// sourcePoints returns the drawing data of the source cells (nil without a mesh).
func (r *Report) sourcePoints() *meshPoints {
	if r.sourcePts == nil && r.sourceMesh != nil {
		r.sourcePts = pointsOf(r.sourceMesh)
	}
	return r.sourcePts
}

// targetPoints returns the drawing data of the target cells (nil without a mesh).
func (r *Report) targetPoints() *meshPoints {
	if r.targetPts == nil && r.targetMesh != nil {
		r.targetPts = pointsOf(r.targetMesh)
	}
	return r.targetPts
}
