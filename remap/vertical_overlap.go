package remap

import "github.com/colbridge/colbridge/weights"

// reconstruction is how a source volume's profile is rebuilt from its mean before it is
// integrated over the pieces of the target volumes.
type reconstruction uint8

const (
	reconConstant   reconstruction = iota // piecewise constant: first-order conservative
	reconPPM                              // CW84 parabola, unlimited (linear in the data)
	reconPPMLimited                       // CW84 parabola with the monotonicity limiter
)

// core applies an overlap map to one column: reconstruct each source volume's profile in
// the measure coordinate, integrate it over the pieces the volume shares with the target
// volumes, divide by the target measures.
//
// With layer measures m_ℓ of the reference levels (nil: their thicknesses in the
// coordinate), source volume s has measure M_s = Σ_ℓ srcFrac[s][ℓ] m_ℓ and target volume t
// has m_t = Σ_ℓ dstFrac[t][ℓ] m_ℓ. Inside source volume s the pieces are laid end to end in
// the measure coordinate ξ ∈ [0, 1], piece p spanning [ξ₁, ξ₂] of length
// Δξ_p = G_p m_{L_p} / Σ_{p∈s} G_p m_{L_p}, and piece p contributes
//
//	M_s (Δξ_p q̄_s + ΔD_p − ρ_s Δξ_p),   ΔD_p = ∫_{ξ₁}^{ξ₂} (a_s − q̄_s),   ρ_s = Σ_{p∈s} ΔD_p,
//
// to target T_p, a_s being the reconstruction. In real arithmetic ρ_s = 0 (the
// reconstruction's mean is q̄_s); subtracting its rounding residue makes the contributions
// of a volume add up to M_s q̄_s to roundings of the size of the terms, even when an
// unlimited parabola swings far from its mean, which is the conservation identity
// Σ_t m_t q_t = Σ_s M_s q̄_s. ΔD_p is evaluated directly, not as a difference of cumulative
// integrals, so a thin target keeps full relative precision; a constant volume has ΔD = 0
// exactly, so constants map to themselves to a few ulps. The whole is linear in the data
// for the linear reconstructions.
type core struct {
	p                *pieces
	srcFrac, dstFrac *weights.CSR
	thick            []float64
	recon            reconstruction
}

// scratch is one worker's buffers for core.applyTo.
type scratch struct {
	ms, mt, e, da, al, ar, acc []float64
	dx, dd                     []float64 // per piece of one source volume
}

func (c *core) newScratch() *scratch {
	ns, nt := c.srcFrac.Rows, c.dstFrac.Rows
	w := &scratch{
		ms: make([]float64, ns), mt: make([]float64, nt), e: make([]float64, ns+1),
		da: make([]float64, ns), al: make([]float64, ns), ar: make([]float64, ns),
		acc: make([]float64, nt),
	}
	var most int32
	for q := 0; q < ns; q++ {
		most = max(most, c.p.SStart[q+1]-c.p.SStart[q])
	}
	w.dx, w.dd = make([]float64, most), make([]float64, most)
	return w
}

// applyTo maps one column: len(src) = source volumes, len(dst) = target volumes, mass nil
// or one positive value per reference layer.
func (c *core) applyTo(dst, src, mass []float64, w *scratch) {
	measureTo(w.ms, c.srcFrac, mass, c.thick)
	measureTo(w.mt, c.dstFrac, mass, c.thick)
	m := mass
	if m == nil {
		m = c.thick
	}
	al, ar := src, src
	if c.recon != reconConstant {
		lim := c.recon == reconPPMLimited
		ppmEdgesTo(w.e, src, w.ms, lim, w.da)
		ppmCellsTo(w.al, w.ar, w.e, src, lim)
		al, ar = w.al, w.ar
	}
	clear(w.acc)
	p := c.p
	for s := 0; s+1 < len(p.SStart); s++ {
		lo, hi := p.SStart[s], p.SStart[s+1]
		if lo == hi {
			continue
		}
		var tot float64
		for q := lo; q < hi; q++ {
			tot += p.G[q] * m[p.L[q]]
		}
		// First pass: each piece's share Δξ and deviation integral ΔD, evaluated directly
		// (no differences of cumulative values, so thin pieces keep their precision).
		var cum, res float64
		l, r, mean, ms := al[s], ar[s], src[s], w.ms[s]
		for q := lo; q < hi; q++ {
			wp := p.G[q] * m[p.L[q]]
			x1 := cum / tot
			cum += wp
			x2 := 1.0
			if q < hi-1 {
				x2 = cum / tot
			}
			dx := wp / tot
			dd := dx * ppmDeviationMean(x1, x2, l, r, mean)
			w.dx[q-lo], w.dd[q-lo] = dx, dd
			res += dd
		}
		// Second pass: the deviations of a volume integrate to zero exactly in real
		// arithmetic; remove their rounding residue in proportion to Δξ, so that the
		// contributions add up to M_s q̄_s to roundings of their own size.
		for q := lo; q < hi; q++ {
			dx := w.dx[q-lo]
			w.acc[p.T[q]] += ms * (dx*mean + (w.dd[q-lo] - res*dx))
		}
	}
	for t := range dst {
		dst[t] = w.acc[t] / w.mt[t]
	}
}

// matrix returns the core with the coordinate measure as a matrix, column by column from
// unit vectors (so it is the same arithmetic as applyTo). Exact zeros are not stored. Only
// for linear reconstructions.
func (c *core) matrix() *weights.CSR {
	ns, nt := c.srcFrac.Rows, c.dstFrac.Rows
	w := c.newScratch()
	unit := make([]float64, ns)
	col := make([]float64, nt)
	var ts []weights.Triplet
	for s := 0; s < ns; s++ {
		unit[s] = 1
		c.applyTo(col, unit, nil, w)
		unit[s] = 0
		for t, v := range col {
			if v != 0 {
				ts = append(ts, weights.Triplet{Row: int32(t), Col: int32(s), Value: v})
			}
		}
	}
	return weights.FromTriplets(nt, ns, ts)
}
