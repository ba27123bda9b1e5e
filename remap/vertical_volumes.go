package remap

import (
	"fmt"
	"math"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// spanTol is the relative tolerance (of the column span) within which the bottom and top
// of two level sets count as the same: a few hundred roundings of the span, far below any
// layer a model uses (the thinnest layers in use are about 1e-4 of the column).
const spanTol = 1e-12

// VolumeEdges returns the edges of the control volumes of location v on levels l, in the
// levels' coordinate: for Layer the nlev+1 interfaces (volume k is layer k); for
// Interface the nlev+2 values z₀, the nlev layer midpoints, z_nlev, so that volume k is
// the "dual layer" of interface k: [z_{k−½}, z_{k+½}] with half layers at the surface
// ([z₀, z_½]) and at the model top ([z_{nlev−½}, z_nlev]). Both sets of volumes tile the
// column [z₀, z_nlev] exactly once. It panics for NoLevels.
//
// Internally a midpoint is never rounded before it is subtracted (see edgePairs), so the
// two halves of a layer are exactly equal; the values returned here are rounded.
func VolumeEdges(l *grids.Levels, v grids.VLocation) []float64 {
	e := pairsOf(l, v)
	x := make([]float64, len(e.lo))
	for k := range x {
		x[k] = e.at(k)
	}
	return x
}

// VolumeMeasures returns the lengths, in the levels' coordinate, of the control volumes of
// location v (see VolumeEdges): the layer thicknesses, or for interfaces the dual-layer
// thicknesses (Δ_{k−1} + Δ_k)/2 with Δ₀/2 at the surface and Δ_{N−1}/2 at the top. These
// are the measures of the "coordinate thickness" default. It panics for NoLevels.
func VolumeMeasures(l *grids.Levels, v grids.VLocation) []float64 {
	e := pairsOf(l, v)
	m := make([]float64, e.n())
	for k := range m {
		m[k] = e.dist(k+1, k)
	}
	return m
}

// edges is a list of volume edges, each the midpoint of a pair of interfaces:
// (z_k, z_k) for an interface, (z_k, z_{k+1}) for a layer midpoint. Distances between
// edges are formed from interface differences, ((a_lo − b_lo) + (a_hi − b_hi))/2, never
// from rounded midpoints, so the two halves of a layer are exactly equal.
type edges struct{ lo, hi []float64 }

// pairsOf returns the control-volume edges of location v on l. It panics for NoLevels.
func pairsOf(l *grids.Levels, v grids.VLocation) edges {
	z := l.Interfaces
	switch v {
	case grids.Layer:
		return edges{z, z}
	case grids.Interface:
		n := l.NLev()
		e := edges{make([]float64, n+2), make([]float64, n+2)}
		e.lo[0], e.hi[0] = z[0], z[0]
		e.lo[n+1], e.hi[n+1] = z[n], z[n]
		copy(e.lo[1:], z[:n])
		copy(e.hi[1:], z[1:])
		return e
	}
	panic(fmt.Sprintf("remap: no control volumes for vertical location %v", v))
}

// pairDist returns the distance from the midpoint of (blo, bhi) to that of (alo, ahi).
func pairDist(alo, ahi, blo, bhi float64) float64 { return ((alo - blo) + (ahi - bhi)) / 2 }

func (e edges) n() int                { return len(e.lo) - 1 } // number of volumes
func (e edges) at(k int) float64      { return 0.5 * (e.lo[k] + e.hi[k]) }
func (e edges) dist(a, b int) float64 { return pairDist(e.lo[a], e.hi[a], e.lo[b], e.hi[b]) }

// snapped returns a copy of e whose first and last edges are those of ref (the caller
// checked that they agree within spanTol).
func (e edges) snapped(ref edges) edges {
	c := edges{append([]float64(nil), e.lo...), append([]float64(nil), e.hi...)}
	n, m := c.n(), ref.n()
	c.lo[0], c.hi[0] = ref.lo[0], ref.hi[0]
	c.lo[n], c.hi[n] = ref.lo[m], ref.hi[m]
	return c
}

// sameSpan reports whether a and b have the same bottom and top within spanTol.
func sameSpan(a, b []float64) bool {
	span := math.Max(a[len(a)-1]-a[0], b[len(b)-1]-b[0])
	return math.Abs(a[0]-b[0]) <= spanTol*span && math.Abs(a[len(a)-1]-b[len(b)-1]) <= spanTol*span
}

// pieces is the common refinement of three partitions of one column: target volumes,
// source volumes and the layers of the reference (mass) levels. Piece p is the interval
// where target T[p], source S[p] and reference layer L[p] overlap; G[p] is its length as
// a fraction of reference layer L[p]. Pieces are stored bottom-up, so the pieces of each
// source volume (and of each target volume) are contiguous and ordered upward; source
// volume s owns pieces SStart[s] .. SStart[s+1]−1.
//
// With a measure m_ℓ per reference layer spread uniformly (in the coordinate) through the
// layer, piece p carries the measure G[p]·m_{L[p]}.
type pieces struct {
	T, S, L []int32
	G       []float64
	SStart  []int32
}

// newPieces sweeps the three edge lists (which must share bottom and top exactly) upward.
// The order of edges is decided on their rounded positions; lengths are pair distances,
// so a piece between an interface and a layer midpoint is exactly half the layer.
func newPieces(te, se, re edges) *pieces {
	p := &pieces{}
	i, j, k := 0, 0, 0
	// (clo, chi) is the pair of the current position x.
	clo, chi := se.lo[0], se.hi[0]
	x := se.at(0)
	for i < te.n() && j < se.n() && k < re.n() {
		ti, sj, rk := te.at(i+1), se.at(j+1), re.at(k+1)
		next := math.Min(ti, math.Min(sj, rk))
		var nlo, nhi float64
		switch next {
		case rk:
			nlo, nhi = re.lo[k+1], re.hi[k+1]
		case sj:
			nlo, nhi = se.lo[j+1], se.hi[j+1]
		default:
			nlo, nhi = te.lo[i+1], te.hi[i+1]
		}
		if next > x {
			if d := pairDist(nlo, nhi, clo, chi); d > 0 {
				p.T = append(p.T, int32(i))
				p.S = append(p.S, int32(j))
				p.L = append(p.L, int32(k))
				p.G = append(p.G, d/re.dist(k+1, k))
			}
			x, clo, chi = next, nlo, nhi
		}
		if ti == next {
			i++
		}
		if sj == next {
			j++
		}
		if rk == next {
			k++
		}
	}
	p.SStart = startsOf(p.S, se.n())
	return p
}

// startsOf returns the offsets of each index's contiguous run in idx (n runs; empty runs
// get the offset of the next).
func startsOf(idx []int32, n int) []int32 {
	st := make([]int32, n+1)
	for _, s := range idx {
		st[s+1]++
	}
	for s := 0; s < n; s++ {
		st[s+1] += st[s]
	}
	return st
}

// reversed returns the pieces with the roles of source and target swapped (the pieces stay
// in bottom-up order, which keeps them contiguous per new source).
func (p *pieces) reversed(ntarget int) *pieces {
	r := &pieces{T: p.S, S: p.T, L: p.L, G: p.G}
	r.SStart = startsOf(r.S, ntarget)
	return r
}

// fractions returns the n × nref matrix F with F[d][ℓ] = Σ G over the pieces of volume d
// (taken from idx) in reference layer ℓ: the share of reference layer ℓ inside volume d.
// The measure of volume d is then Σ_ℓ F[d][ℓ]·m_ℓ.
func (p *pieces) fractions(idx []int32, n, nref int) *weights.CSR {
	ts := make([]weights.Triplet, len(idx))
	for q := range idx {
		ts[q] = weights.Triplet{Row: idx[q], Col: p.L[q], Value: p.G[q]}
	}
	return weights.FromTriplets(n, nref, ts)
}

// clippedFractions returns F[d][ℓ] = |V_d ∩ L_ℓ| / |L_ℓ| for volumes with edges e against
// reference layers with edges re, counting only the part of each volume inside the
// reference column (used for linear maps, whose target may reach outside the source).
func clippedFractions(e, re edges) *weights.CSR {
	var ts []weights.Triplet
	for d := 0; d < e.n(); d++ {
		for l := 0; l < re.n(); l++ {
			// The higher of the two lower edges and the lower of the two upper edges.
			alo, ahi := e.lo[d], e.hi[d]
			if re.at(l) > e.at(d) {
				alo, ahi = re.lo[l], re.hi[l]
			}
			blo, bhi := e.lo[d+1], e.hi[d+1]
			if re.at(l+1) < e.at(d+1) {
				blo, bhi = re.lo[l+1], re.hi[l+1]
			}
			if f := pairDist(blo, bhi, alo, ahi) / re.dist(l+1, l); f > 0 {
				ts = append(ts, weights.Triplet{Row: int32(d), Col: int32(l), Value: f})
			}
		}
	}
	return weights.FromTriplets(e.n(), re.n(), ts)
}

// measureTo sets dst = F·m with compensated sums; m nil means the reference layers'
// thicknesses in the coordinate.
func measureTo(dst []float64, f *weights.CSR, m, thick []float64) {
	if m == nil {
		m = thick
	}
	for d := 0; d < f.Rows; d++ {
		var s, c float64
		for k := f.RowStart[d]; k < f.RowStart[d+1]; k++ {
			x := f.Values[k] * m[f.ColIndex[k]]
			t := s + x
			if math.Abs(s) >= math.Abs(x) {
				c += (s - t) + x
			} else {
				c += (x - t) + s
			}
			s = t
		}
		dst[d] = s + c
	}
}
