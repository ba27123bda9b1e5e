package remap

import (
	"math"

	"github.com/colbridge/colbridge/weights"
)

// boundsRoundTol: a value outside its bounds by less than this fraction of the bounds'
// magnitude is left alone. A convex combination of a row's sources computed in floating
// point can leave their range by a few roundings (a row of 20 weights: about 20 ulp, 4e-15
// relative); clipping those would move values for nothing, so first-order maps (weights
// in [0, 1], rows summing to 1) pass unchanged.
const boundsRoundTol = 1e-14

// clipAndAssuredSum is the clip-and-assured-sum (CAAS) fixer of Bradley, Bosler, Guba et
// al. (2019, SIAM J. Sci. Comput.) on one slice: it moves the values y[i] of the active
// targets (active[i] nil or true) into their local bounds [lo[i], hi[i]] while keeping the
// weighted sum Σ w_i y_i:
//
//  1. clip: y_i ← min(max(y_i, lo_i), hi_i), for values outside by more than roundings
//     (boundsRoundTol);
//  2. the clipped mass Δ = Σ w_i y_i(before) − Σ w_i y_i(clipped), summed compensated;
//  3. Δ > 0 is added in proportion to the room left below the upper bounds,
//     y_i += Δ·(hi_i − y_i)/Σ_j w_j(hi_j − y_j); Δ < 0 is taken away in proportion to the
//     room above the lower bounds.
//
// When the bounds admit the mass (Σ w lo ≤ Σ w y ≤ Σ w hi) every value ends inside its
// bounds and the sum is kept to rounding; when they do not, step 3 still restores the
// sum exactly (some values then leave their bounds in proportion to their room, or all
// shift by the same amount when no value has room left) and feasible is false. It returns the number of values it changed.
func clipAndAssuredSum(y, lo, hi, w []float64, active []bool) (changed int, feasible bool) {
	var before, after weights.Accumulator
	for i, x := range y {
		if active != nil && !active[i] {
			continue
		}
		before.Add(w[i] * x)
		c := x
		if tol := boundsRoundTol * math.Max(math.Abs(lo[i]), math.Abs(hi[i])); x < lo[i]-tol || x > hi[i]+tol {
			c = min(max(x, lo[i]), hi[i])
		}
		if c != x {
			changed++
			y[i] = c
		}
		after.Add(w[i] * c)
	}
	if changed == 0 {
		return 0, true
	}
	delta := before.Sum() - after.Sum()
	if delta == 0 {
		return changed, true
	}
	var room weights.Accumulator
	for i, x := range y {
		if active != nil && !active[i] {
			continue
		}
		if delta > 0 {
			room.Add(w[i] * (hi[i] - x))
		} else {
			room.Add(w[i] * (x - lo[i]))
		}
	}
	r := room.Sum()
	if !(r > 0) {
		// No room at all: the bounds cannot hold the mass; keep it by a uniform shift.
		var tw weights.Accumulator
		for i := range y {
			if active == nil || active[i] {
				tw.Add(w[i])
			}
		}
		if s := tw.Sum(); s > 0 {
			for i := range y {
				if active == nil || active[i] {
					y[i] += delta / s
				}
			}
		}
		return changed, false
	}
	f := delta / r
	feasible = f <= 1 && f >= -1
	for i, x := range y {
		if active != nil && !active[i] {
			continue
		}
		if delta > 0 {
			y[i] = x + f*(hi[i]-x)
		} else {
			y[i] = x + f*(x-lo[i])
		}
	}
	return changed, feasible
}
