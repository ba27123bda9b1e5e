package conserve

import (
	"fmt"
	"math"

	"github.com/colbridge/colbridge/weights"
)

// IdentityTol is the level below which PhysicsIdentityDefect counts as rounding, so that
// W∘P = I and the dynamics round trip P∘W must be a projection. Products of two maps
// with O(10) entries per row round at ≈ 1e-15; 1e-10 leaves room for maps stored in
// single precision's worth of digits in foreign files.
const IdentityTol = 1e-10

// CheckRoundTrip measures the two round trips of a restriction w (target × source) and a
// prolongation p (source × target): R = P∘W on the source (dynamics) side and Q = W∘P on
// the target (physics) side. srcFields and tgtFields are test fields on the two sides.
// how names the prolongation in the report ("given" or "adjoint"). It panics on size
// mismatch.
func CheckRoundTrip(w, p *weights.CSR, sd PairSides, srcFields, tgtFields []NamedVector, probes int, seed uint64, how string) RoundTripReport {
	if p.Rows != w.Cols || p.Cols != w.Rows {
		panic(fmt.Sprintf("conserve: CheckRoundTrip: prolongation %d × %d for a %d × %d restriction", p.Rows, p.Cols, w.Rows, w.Cols))
	}
	r := RoundTripReport{Prolongation: how, Probes: probes}
	r.Dynamics = roundTripSide(w, p, sd.MS, coveredOnly(sd.CovS, w.Cols), srcFields, probes, seed)
	r.Physics = roundTripSide(p, w, sd.MT, coveredOnly(sd.CovT, w.Rows), tgtFields, probes, seed+2)
	// ‖W(Py) − y‖ / ‖y‖, all probes in one batch.
	ys := randomVectors(probes, w.Rows, seed+3)
	wpy := make([]float64, w.Rows*probes)
	chain{w, p}.applyBatch(wpy, interleave(ys), probes)
	for v, y := range ys {
		d := make([]float64, w.Rows)
		for i := range d {
			d[i] = wpy[i*probes+v] - y[i]
		}
		if n := weightedNorm(y, sd.MT); n > 0 {
			r.PhysicsIdentityDefect = math.Max(r.PhysicsIdentityDefect, weightedNorm(d, sd.MT)/n)
		}
	}
	r.IdempotenceExpected = r.PhysicsIdentityDefect <= IdentityTol
	return r
}

// roundTripSide measures R = b∘a (a first) on the side with measure m.
func roundTripSide(a, b *weights.CSR, m []float64, covered []bool, fields []NamedVector, probes int, seed uint64) RoundTripSide {
	var s RoundTripSide
	mid := make([]float64, a.Rows)
	out := make([]float64, b.Rows)
	apply := func(dst, x []float64) {
		a.ApplyTo(mid, x)
		b.ApplyTo(dst, mid)
	}
	one := make([]float64, a.Cols)
	for i := range one {
		one[i] = 1
	}
	apply(out, one)
	for i, v := range out {
		if covered == nil || covered[i] {
			s.ConstantDefect = math.Max(s.ConstantDefect, math.Abs(v-1))
		}
	}
	for _, f := range fields {
		apply(out, f.Values)
		fm := massBudget(f.Name, f.Values, out, m, m, nil)
		s.Fields = append(s.Fields, fm)
		s.MaxMassError = math.Max(s.MaxMassError, math.Abs(fm.RelativeError))
	}
	// ‖R(Rx) − Rx‖ / ‖x‖ for all probes in one batch (the index arrays are read once).
	xs := randomVectors(probes, a.Cols, seed)
	midk := make([]float64, a.Rows*probes)
	rx := make([]float64, b.Rows*probes)
	a.ApplyBatchTo(midk, interleave(xs), probes)
	b.ApplyBatchTo(rx, midk, probes)
	rrx := interleave(xs) // reuse as the second output (same size)
	a.ApplyBatchTo(midk, rx, probes)
	b.ApplyBatchTo(rrx, midk, probes)
	d := make([]float64, b.Rows)
	for v, x := range xs {
		for i := range d {
			d[i] = rrx[i*probes+v] - rx[i*probes+v]
		}
		if n := weightedNorm(x, m); n > 0 {
			s.IdempotenceDefect = math.Max(s.IdempotenceDefect, weightedNorm(d, m)/n)
		}
	}
	return s
}

// interleave packs vectors for weights.CSR.ApplyBatchTo: out[i·k + v] = xs[v][i].
func interleave(xs [][]float64) []float64 {
	k := len(xs)
	if k == 0 {
		return nil
	}
	out := make([]float64, len(xs[0])*k)
	for v, x := range xs {
		for i, e := range x {
			out[i*k+v] = e
		}
	}
	return out
}
