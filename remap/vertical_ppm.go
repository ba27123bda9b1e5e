package remap

import (
	"fmt"
	"math"
)

// This file holds the piecewise-parabolic reconstruction of Colella & Woodward (1984,
// J. Comput. Phys. 54:174–201; "CW84" below) on cells of arbitrary widths, and its
// integration over the pieces of target volumes. See the VerticalMethod documentation
// for the formulas and the boundary treatment.

// ppmOneSidedEdge returns the edge value at interface i of cells with widths d and means q:
// the derivative at x_i of the polynomial of degree P that interpolates the cumulative
// integral A(x) = ∫q at the P+1 interfaces lo .. lo+P (P = min(4, n), the window as
// centred on i as the column allows). The value is exact whenever q is a polynomial of
// degree P−1 (a cubic for P = 4), on any widths. With lo = i−2 it is the centred
// fourth-order edge value of which CW84 eq. 1.6 is the explicit form.
func ppmOneSidedEdge(i int, d, q []float64) float64 {
	n := len(d)
	p := min(4, n)
	lo := min(max(i-2, 0), n-p)
	// Node positions relative to x_i, built from widths so that no large coordinate
	// cancels.
	var x [5]float64
	for k := lo; k <= lo+p; k++ {
		var s float64
		if k > i {
			for c := i; c < k; c++ {
				s += d[c]
			}
		} else {
			for c := k; c < i; c++ {
				s -= d[c]
			}
		}
		x[k-lo] = s
	}
	// L'_k(x_i): derivative of the Lagrange basis polynomial of node k at node i.
	var dl [5]float64
	ii := i - lo
	for k := 0; k <= p; k++ {
		if k == ii {
			for m := 0; m <= p; m++ {
				if m != ii {
					dl[k] -= 1 / x[m]
				}
			}
			continue
		}
		num, den := 1.0, 1.0
		for m := 0; m <= p; m++ {
			if m == k {
				continue
			}
			den *= x[k] - x[m]
			if m != ii {
				num *= -x[m]
			}
		}
		dl[k] = num / den
	}
	// A(x_k) = Σ_{c<k} d_c q_c (from the window's bottom), so the weight of cell c is
	// d_c Σ_{k>c} L'_k(x_i). The weights sum to 1, so the value is formed as a correction
	// to a neighbouring mean: constants come out exactly even when very unequal widths
	// make the weights large.
	ref := q[min(i, n-1)]
	var v float64
	for c := lo; c < lo+p; c++ {
		var w float64
		for k := c - lo + 1; k <= p; k++ {
			w += dl[k]
		}
		v += d[c] * w * (q[c] - ref)
	}
	return ref + v
}

// ppmSlope is CW84 eq. 1.7, the mean slope δa_j of cell j on non-uniform widths (times the
// width d_j); limited applies CW84 eq. 1.8: zero at a local extremum of the means, else
// the smallest of |δa_j|, 2|q_j − q_{j−1}|, 2|q_{j+1} − q_j|, with the sign of δa_j.
func ppmSlope(j int, d, q []float64, limited bool) float64 {
	dm, d0, dp := d[j-1], d[j], d[j+1]
	dqm, dqp := q[j]-q[j-1], q[j+1]-q[j]
	s := d0 / (dm + d0 + dp) * ((2*dm+d0)/(dp+d0)*dqp + (d0+2*dp)/(dm+d0)*dqm)
	if !limited {
		return s
	}
	if dqm*dqp <= 0 {
		return 0
	}
	return math.Copysign(math.Min(math.Abs(s), math.Min(2*math.Abs(dqm), 2*math.Abs(dqp))), s)
}

// ppmInteriorEdge is CW84 eq. 1.6: the edge value between cells j = i−1 and j+1 = i from the
// means of cells j−1 .. j+2, their widths and the slopes δa_j, δa_{j+1}.
func ppmInteriorEdge(i int, d, q []float64, daj, daj1 float64) float64 {
	j := i - 1
	dm, d0, d1, d2 := d[j-1], d[j], d[j+1], d[j+2]
	dq := q[j+1] - q[j]
	c1 := (dm + d0) / (2*d0 + d1)
	c2 := (d2 + d1) / (2*d1 + d0)
	return q[j] + d0/(d0+d1)*dq +
		(2*d1*d0/(d0+d1)*(c1-c2)*dq-d0*c1*daj1+d1*(d1+d2)/(d0+2*d1)*daj)/(dm+d0+d1+d2)
}

// ppmEdgesTo sets e[0..n] to the edge values of the reconstruction of means q on cells of
// widths d: CW84 eq. 1.6 at interfaces 2 .. n−2, the one-sided fourth-order value
// (ppmOneSidedEdge) at interfaces 0, 1, n−1, n (at all of them when n < 4). When limited,
// the slopes are CW84 eq. 1.8's and every edge between two cells is clipped to the range
// of their means. da is scratch of length n.
func ppmEdgesTo(e, q, d []float64, limited bool, da []float64) {
	n := len(q)
	if n >= 4 {
		for j := 1; j <= n-2; j++ {
			da[j] = ppmSlope(j, d, q, limited)
		}
		for i := 2; i <= n-2; i++ {
			e[i] = ppmInteriorEdge(i, d, q, da[i-1], da[i])
		}
	}
	for i := 0; i <= n; i++ {
		if n >= 4 && i >= 2 && i <= n-2 {
			continue
		}
		e[i] = ppmOneSidedEdge(i, d, q)
	}
	if limited {
		for i := 1; i < n; i++ {
			lo, hi := math.Min(q[i-1], q[i]), math.Max(q[i-1], q[i])
			e[i] = math.Min(math.Max(e[i], lo), hi)
		}
	}
}

// ppmCellsTo sets al[s], ar[s] (the parabola's values at the bottom and top of cell s) from
// the edge values. When limited, the lowest and highest cells are constant and every
// other cell gets the CW84 eq. 1.10 monotonicity adjustment: constant at a local extremum
// of the means, otherwise the edge nearer the mean is moved so that the parabola has no
// extremum inside the cell.
func ppmCellsTo(al, ar, e, q []float64, limited bool) {
	n := len(q)
	for s := 0; s < n; s++ {
		l, r, m := e[s], e[s+1], q[s]
		if limited {
			switch {
			case s == 0 || s == n-1 || (r-m)*(m-l) <= 0:
				l, r = m, m
			default:
				dd := r - l
				a6 := 6*m - 3*(l+r)
				if dd*a6 > dd*dd {
					l = 3*m - 2*r
				} else if -dd*dd > dd*a6 {
					r = 3*m - 2*l
				}
			}
		}
		al[s], ar[s] = l, r
	}
}

// ppmDeviationMean returns the mean over [x1, x2] ⊂ [0, 1] of a(ξ) − q̄ for the parabola
// a(ξ) = a_L + ξ(Δa + a₆(1−ξ)) with Δa = a_R − a_L, a₆ = 6(q̄ − (a_L + a_R)/2) (CW84 eqs.
// 1.4–1.5): (a_L − q̄) + (Δa + a₆)(x1 + x2)/2 − a₆(x1² + x1x2 + x2²)/3. Over [0, 1] it is 0;
// for a constant cell (a_L = a_R = q̄) it is exactly 0.
func ppmDeviationMean(x1, x2, l, r, m float64) float64 {
	a6 := 6*m - 3*(l+r)
	return (l - m) + (r-l+a6)*(x1+x2)/2 - a6*(x1*x1+x1*x2+x2*x2)/3
}

// RemapPPMColumnTo remaps the means src of the cells with edges se (len(src)+1 values,
// strictly increasing) to the means dst over the cells with edges te (len(dst)+1,
// increasing, same bottom and top as se within 1e-12 of the span) by integrating the
// piecewise-parabolic reconstruction of src. The edges may be in any coordinate: the
// levels' coordinate, or the cumulative mass (pressure) of the column, which makes the
// remap mass-weighted. limited selects the CW84 monotonicity limiter (see
// VerticalMethod).
//
// Guarantees (tested through VerticalMap, which shares the code): Σ_t |T_t| dst_t =
// Σ_s |S_s| src_s to 1e-13 relative to the sum of the absolute terms; unlimited, exact (to
// rounding) for the means of any quadratic on any widths; limited, every dst value lies
// within [min src, max src]. See VerticalMethod for the formulas, the boundary treatment
// and the range of widths the guarantees cover. It allocates O(n) scratch per call; for
// many columns build a VerticalMap once.
func RemapPPMColumnTo(dst, src, se, te []float64, limited bool) error {
	if len(se) != len(src)+1 || len(te) != len(dst)+1 || len(src) == 0 || len(dst) == 0 {
		panic(fmt.Sprintf("remap: RemapPPMColumnTo: %d source means with %d edges, %d target means with %d edges", len(src), len(se), len(dst), len(te)))
	}
	for _, c := range []struct {
		name string
		e    []float64
	}{{"source", se}, {"target", te}} {
		for k := 1; k < len(c.e); k++ {
			if !(c.e[k] > c.e[k-1]) || math.IsInf(c.e[k], 0) {
				return fmt.Errorf("remap: ppm column: %s edge %d (%g) is not above edge %d (%g)", c.name, k, c.e[k], k-1, c.e[k-1])
			}
		}
	}
	if !sameSpan(se, te) {
		return fmt.Errorf("remap: ppm column: source spans [%g, %g] but target [%g, %g]", se[0], se[len(se)-1], te[0], te[len(te)-1])
	}
	s := edges{se, se}
	p := newPieces(edges{te, te}.snapped(s), s, s)
	thick := make([]float64, len(src))
	for k := range thick {
		thick[k] = se[k+1] - se[k]
	}
	c := &core{p: p, srcFrac: p.fractions(p.S, len(src), len(src)), dstFrac: p.fractions(p.T, len(dst), len(src)), thick: thick, recon: reconPPM}
	if limited {
		c.recon = reconPPMLimited
	}
	c.applyTo(dst, src, nil, c.newScratch())
	return nil
}
