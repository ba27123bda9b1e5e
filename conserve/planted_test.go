package conserve

import (
	"math"
	"testing"

	"github.com/colbridge/colbridge/weights"
)

// tolPlanted: the planted defects are computed from weights that are exact binary
// fractions times one decimal factor (0.99, 1.1, …), so the reported defects carry one or
// two roundings of O(1) quantities: 1e-15 absolute leaves a factor 5 over 2⁻⁵³·2.
const tolPlanted = 1e-15

// plantedCase is a 2:1 coarsening of the periodic 8×8 unit square onto 4×4 with one
// fault planted. Fine cell s = j·8 + i belongs to coarse cell t = (j/2)·4 + i/2; all
// weights are 1/4 = fine area / coarse area (overlap area over target area, Jones 1999),
// so before planting the map is exactly conservative and consistent.
type plantedCase struct {
	name  string
	plant func(w *weights.CSR)
	check func(t *testing.T, r *Report)
}

// entry returns the storage index of (row, col).
func entry(w *weights.CSR, row, col int) int64 {
	for k := w.RowStart[row]; k < w.RowStart[row+1]; k++ {
		if int(w.ColIndex[k]) == col {
			return k
		}
	}
	panic("entry not stored")
}

func TestPlantedFaults(t *testing.T) {
	const s0 = 13 // fine cell (5, 1) → coarse cell (2, 0) = 2
	const t0 = 2
	cases := []plantedCase{
		{
			// A map missing 1 % of one cell's overlap: W_{t0,s0} = 0.99·1/4. Then
			// c_s0 = 4·(0.99/4) = 0.99 (defect 0.01, by hand), row t0 sums to
			// 3/4 + 0.2475 = 0.9975 (defect 0.0025), and the constant field loses
			// m_t·0.0025 = 0.0025/16 of a total mass 1.
			name:  "leak",
			plant: func(w *weights.CSR) { w.Values[entry(w, t0, s0)] *= 0.99 },
			check: func(t *testing.T, r *Report) {
				c := r.Conservation
				expect(t, "conservation max defect", c.MaxDefect, 0.01, tolPlanted)
				expectInt(t, "conservation max at", c.MaxDefectAt, s0)
				expect(t, "column sum", c.ColumnSumAtMax, 0.99, tolPlanted)
				expect(t, "consistency max defect", r.Consistency.MaxDefect, 0.0025, tolPlanted)
				expectInt(t, "consistency max at", r.Consistency.MaxDefectAt, t0)
				expect(t, "constant field mass error", c.Fields[0].RelativeError, -0.0025/16, tolPlanted)
				// Exactly one source cell is off, in the decade [1e-2, 1e-1).
				if c.Histogram.Counts[15] != 1 || c.Histogram.Zero != 63 {
					t.Errorf("histogram %v zero %d, want one defect in decade −2 and 63 zeros", c.Histogram.Counts, c.Histogram.Zero)
				}
				// The constant field comes out as 0.9975 on row t0: below its minimum 1,
				// so the leak also makes a new extremum.
				expectGates(t, r, "max-conservation-defect", "max-consistency-defect", "max-mass-error", "max-overshoot")
			},
		},
		{
			// One negative weight: W_{t0,s0} = −0.1 instead of 1/4.
			name:  "negative",
			plant: func(w *weights.CSR) { w.Values[entry(w, t0, s0)] = -0.1 },
			check: func(t *testing.T, r *Report) {
				expectInt(t, "negative weights", r.NegativeWeights, 1)
				expect(t, "most negative", r.Bounds.MostNegative, -0.1, 0)
				expectInt(t, "most negative row", r.Bounds.MostNegativeRow, t0)
				expectInt(t, "most negative col", r.Bounds.MostNegativeCol, s0)
				// Row sum 3/4 − 0.1 = 0.65 and c_s0 = 4·(−0.1) = −0.4.
				expect(t, "consistency max defect", r.Consistency.MaxDefect, 0.35, tolPlanted)
				expect(t, "conservation max defect", r.Conservation.MaxDefect, 1.4, tolPlanted)
				expectGates(t, r, "max-conservation-defect", "max-consistency-defect", "max-mass-error", "no-negative-weights", "max-overshoot")
			},
		},
		{
			// A row that does not sum to one: row t0 scaled by 1.1 sums to 1.1 (defect
			// 0.1); each of its four sources then has c_s = 4·(1.1/4) = 1.1 (defect 0.1).
			name: "row",
			plant: func(w *weights.CSR) {
				for k := w.RowStart[t0]; k < w.RowStart[t0+1]; k++ {
					w.Values[k] *= 1.1
				}
			},
			check: func(t *testing.T, r *Report) {
				expect(t, "consistency max defect", r.Consistency.MaxDefect, 0.1, tolPlanted)
				expectInt(t, "consistency max at", r.Consistency.MaxDefectAt, t0)
				expect(t, "conservation max defect", r.Conservation.MaxDefect, 0.1, tolPlanted)
				expectInt(t, "negative weights", r.NegativeWeights, 0)
				expectGates(t, r, "max-conservation-defect", "max-consistency-defect", "max-mass-error", "max-overshoot")
			},
		},
	}
	fine, coarse := planeQuads(t, 8), planeQuads(t, 4)
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			w := coarsen2(4)
			c.plant(w)
			r, err := Audit(cellMap(w, fine, coarse), Options{SourceMesh: fine, TargetMesh: coarse, Thresholds: StrictThresholds()})
			if err != nil {
				t.Fatal(err)
			}
			c.check(t, r)
			if r.Passed {
				t.Error("a planted fault passed the strict gates")
			}
		})
	}
	t.Run("clean", func(t *testing.T) {
		r, err := Audit(cellMap(coarsen2(4), fine, coarse), Options{SourceMesh: fine, TargetMesh: coarse, Thresholds: StrictThresholds()})
		if err != nil {
			t.Fatal(err)
		}
		if !r.Passed || *r.ConservationMaxDefect != 0 || r.ConsistencyMaxDefect != 0 {
			t.Errorf("clean map: passed %v, defects %g %g, failures %+v", r.Passed, *r.ConservationMaxDefect, r.ConsistencyMaxDefect, r.Failures)
		}
	})
}

// TestPlantedWrongAdjoint: the prolongation of the 2:1 coarsening built with unit
// measures instead of the cell areas is Wᵀ, while the adjoint W* = M_s⁻¹WᵀM_t is 4·Wᵀ
// (m_t/m_s = 4): so ‖P − W*‖/‖W*‖ = 3/4 exactly, P's rows sum to 1/4 (consistency defect
// 3/4) and P gives each coarse cell back a quarter of its mass (conservation defect 3/4);
// W itself is perfect. The correctly built P = W* passes with zero difference.
func TestPlantedWrongAdjoint(t *testing.T) {
	fine, coarse := planeQuads(t, 8), planeQuads(t, 4)
	w := coarsen2(4)
	m := cellMap(w, fine, coarse)
	wrong := &weights.Map{W: w.T(), Source: m.Target, Target: m.Source, Method: "adjoint"}
	th := Thresholds{MaxPairDifference: 1e-12}
	r, err := Audit(m, Options{Prolongation: wrong, Thresholds: th})
	if err != nil {
		t.Fatal(err)
	}
	p := r.Pair
	expect(t, "‖P − W*‖/‖W*‖", p.RelativeDifference, 0.75, tolPlanted)
	expect(t, "largest entry difference", p.MaxEntryDifference, 0.75, tolPlanted)
	expect(t, "P consistency", p.ProlongationConsistency, 0.75, tolPlanted)
	expect(t, "P conservation", p.ProlongationConservation, 0.75, tolPlanted)
	expect(t, "W conservation", p.RestrictionConservation, 0, tolPlanted)
	expect(t, "W consistency", p.RestrictionConsistency, 0, tolPlanted)
	// ⟨Wx, y⟩_t = ⟨x, W*y⟩_s = 4⟨x, Py⟩_s: the defect (a−b)/(|a|+|b|) is 3/5 when the
	// two Cauchy–Schwarz bounds are attained; it must at least be far from rounding.
	if p.AdjointIdentityDefect < 0.01 {
		t.Errorf("adjoint identity defect %g, want a clear failure", p.AdjointIdentityDefect)
	}
	expectGates(t, r, "max-pair-difference")

	good := &weights.Map{W: Adjoint(w, fine.CellArea, coarse.CellArea), Source: m.Target, Target: m.Source, Method: "adjoint"}
	r, err = Audit(m, Options{Prolongation: good, Thresholds: th})
	if err != nil {
		t.Fatal(err)
	}
	expect(t, "good pair difference", r.Pair.RelativeDifference, 0, tolPlanted)
	// The adjoint identity holds to rounding of sums of O(1) products: 1e-15.
	if r.Pair.AdjointIdentityDefect > 1e-15 {
		t.Errorf("good pair: adjoint identity defect %g", r.Pair.AdjointIdentityDefect)
	}
	// W conservative ⇔ W* consistent and W consistent ⇔ W* conservative (DESIGN.md §5;
	// both are the same sums, linear algebra).
	expect(t, "W* consistency", r.Pair.AdjointConsistency, r.Pair.RestrictionConservation, tolPlanted)
	expect(t, "W* conservation", r.Pair.AdjointConservation, r.Pair.RestrictionConsistency, tolPlanted)
	if !r.Passed {
		t.Errorf("good pair failed: %+v", r.Failures)
	}
	// The round trip with the true adjoint is a projection: W∘W* = I on the coarse
	// cells (each fine cell belongs to one coarse cell).
	if !r.RoundTrip.IdempotenceExpected || r.RoundTrip.Dynamics.IdempotenceDefect > 1e-15 {
		t.Errorf("round trip: expected %v, idempotence defect %g", r.RoundTrip.IdempotenceExpected, r.RoundTrip.Dynamics.IdempotenceDefect)
	}
}

// TestAdjointIdentity: ⟨Wx, y⟩_t = ⟨x, W*y⟩_s for random maps and positive measures
// (the definition of the adjoint; linear algebra), to rounding.
func TestAdjointIdentity(t *testing.T) {
	for seed := uint64(1); seed <= 5; seed++ {
		xs := randomVectors(3, 40, seed)
		var ts []weights.Triplet
		for i := 0; i < 30; i++ {
			for j := 0; j < 40; j++ {
				if xs[0][j]*xs[1][i%40] > 0.3 {
					ts = append(ts, weights.Triplet{Row: int32(i), Col: int32(j), Value: xs[2][(i+j)%40]})
				}
			}
		}
		w := weights.FromTriplets(30, 40, ts)
		ms, mt := make([]float64, 40), make([]float64, 30)
		for j := range ms {
			ms[j] = 1 + math.Abs(xs[1][j])
		}
		for i := range mt {
			mt[i] = 0.5 + math.Abs(xs[2][i])
		}
		// The identity defect is relative to the Cauchy–Schwarz scale: a few roundings.
		if d := adjointIdentityDefect(w, Adjoint(w, ms, mt), ms, mt, 8, seed); d > 1e-15 {
			t.Errorf("seed %d: adjoint identity defect %g", seed, d)
		}
	}
}

func expect(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol {
		t.Errorf("%s = %.17g, want %.17g (±%g)", what, got, want, tol)
	}
}

func expectInt(t *testing.T, what string, got, want int) {
	t.Helper()
	if got != want {
		t.Errorf("%s = %d, want %d", what, got, want)
	}
}

// expectGates checks that exactly the named gates failed, in order.
func expectGates(t *testing.T, r *Report, gates ...string) {
	t.Helper()
	var got []string
	for _, f := range r.Failures {
		got = append(got, f.Gate)
	}
	if len(got) != len(gates) {
		t.Errorf("failed gates %v, want %v", got, gates)
		return
	}
	for i := range got {
		if got[i] != gates[i] {
			t.Errorf("failed gates %v, want %v", got, gates)
			return
		}
	}
	if r.Passed {
		t.Error("report passed with failed gates")
	}
}
