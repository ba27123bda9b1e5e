package remap

import (
	"fmt"
	"math"
	"sort"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/par"
	"github.com/colbridge/colbridge/weights"
)

// VerticalOptions tunes NewVerticalMap; the zero value (or nil) gives the defaults.
type VerticalOptions struct {
	// Extrapolation is the rule of VerticalLinear beyond the outermost source points.
	Extrapolation Extrapolation
}

// VerticalMap is a per-column vertical map from the degrees of freedom of location
// SourceLoc on levels Source to those of TargetLoc on Target, built once in the levels'
// coordinate and applied to every column. See VerticalMethod for the methods, formulas,
// boundary rules and guarantees.
//
// W is the map for the coordinate measure (layer thickness in the levels' coordinate) as a
// Target.Size(TargetLoc) × Source.Size(SourceLoc) matrix, ready for a factored
// horizontal ⊗ vertical application (Factored); it is nil for VerticalPPMLimited, which is
// not linear. Layer measures of the column (thickness or mass) enter at apply time through
// ApplyMeasureTo and ApplyColumnsTo, which take one value per layer of MassLevels().
//
// A VerticalMap is not modified by its methods and may be used from several goroutines.
type VerticalMap struct {
	Source, Target       *grids.Levels
	SourceLoc, TargetLoc grids.VLocation
	Method               VerticalMethod
	// Extrapolation is the rule used beyond the outermost source points (VerticalLinear
	// and the adjoint of a linear map).
	Extrapolation Extrapolation
	// W is the map with the coordinate measure; nil for VerticalPPMLimited.
	W *weights.CSR

	ref              *grids.Levels  // the levels whose layers carry the measure
	thick            []float64      // ref's layer thicknesses in the coordinate
	srcFrac, dstFrac *weights.CSR   // volume × ref layer shares (see pieces.fractions)
	core             *core          // overlap maps (conservative, ppm, their adjoints)
	rt               *weights.CSR   // adjoint of a linear map: the restriction's transpose
	restriction      VerticalMethod // for VerticalAdjoint: the method of the restriction
}

// NewVerticalMap builds the map from location sourceLoc on source to targetLoc on target
// with the given method (VerticalAdjoint is made by Adjoint instead). Both level sets must
// be in the same coordinate. The overlap methods (conservative, ppm, ppm-limited) need the
// two columns to have the same bottom and top (within 1e-12 of the span; the target ends
// are then set to the source's); linear allows any target and extrapolates.
// Cost: O(n) for linear and conservative, O(n²) for ppm (the matrix is assembled from unit
// vectors), n the number of degrees of freedom per column.
func NewVerticalMap(source *grids.Levels, sourceLoc grids.VLocation, target *grids.Levels, targetLoc grids.VLocation, method VerticalMethod, opt *VerticalOptions) (*VerticalMap, error) {
	if source == nil || target == nil {
		return nil, fmt.Errorf("remap: vertical map: need source and target levels")
	}
	if source.Coord != target.Coord {
		return nil, fmt.Errorf("remap: vertical map: source levels are in %v, target levels in %v", source.Coord, target.Coord)
	}
	for _, l := range []struct {
		name string
		loc  grids.VLocation
	}{{"source", sourceLoc}, {"target", targetLoc}} {
		if l.loc != grids.Layer && l.loc != grids.Interface {
			return nil, fmt.Errorf("remap: vertical map: %s location must be layer or interface, not %v", l.name, l.loc)
		}
	}
	var o VerticalOptions
	if opt != nil {
		o = *opt
	}
	if o.Extrapolation != ExtrapolateLinear && o.Extrapolation != ExtrapolateConstant {
		return nil, fmt.Errorf("remap: vertical map: unknown extrapolation %v", o.Extrapolation)
	}
	m := &VerticalMap{
		Source: source, Target: target, SourceLoc: sourceLoc, TargetLoc: targetLoc,
		Method: method, Extrapolation: o.Extrapolation,
		ref: source, thick: source.Thicknesses(),
	}
	se, te, re := pairsOf(source, sourceLoc), pairsOf(target, targetLoc), pairsOf(source, grids.Layer)
	switch method {
	case VerticalLinear:
		slo, shi := pointPairs(source, sourceLoc)
		tlo, thi := pointPairs(target, targetLoc)
		m.W = linearWeights(slo, shi, tlo, thi, o.Extrapolation)
		m.srcFrac, m.dstFrac = clippedFractions(se, re), clippedFractions(te, re)
		return m, nil
	case VerticalConservative, VerticalPPM, VerticalPPMLimited:
		if !sameSpan(source.Interfaces, target.Interfaces) {
			return nil, fmt.Errorf("remap: vertical map (%v): source levels span [%g, %g] but target levels [%g, %g]; overlap methods need the same column",
				method, source.Interfaces[0], source.Interfaces[source.NLev()], target.Interfaces[0], target.Interfaces[target.NLev()])
		}
		p := newPieces(te.snapped(re), se, re)
		m.srcFrac = p.fractions(p.S, se.n(), re.n())
		m.dstFrac = p.fractions(p.T, te.n(), re.n())
		m.core = &core{p: p, srcFrac: m.srcFrac, dstFrac: m.dstFrac, thick: m.thick}
		switch method {
		case VerticalPPM:
			m.core.recon = reconPPM
		case VerticalPPMLimited:
			m.core.recon = reconPPMLimited
			return m, nil
		}
		m.W = m.core.matrix()
		return m, nil
	case VerticalAdjoint:
		return nil, fmt.Errorf("remap: vertical map: build the restriction and call its Adjoint method")
	}
	return nil, fmt.Errorf("remap: vertical map: unknown method %v", method)
}

// linearWeights interpolates linearly in the coordinate from the points of the source to
// the points of the target; beyond the outermost source points it extrapolates by ex. A
// point is given by the two interfaces it is the midpoint of (an interface by itself
// twice), and distances are formed from interface differences: ((lo−lo′) + (hi−hi′))/2.
// So a layer's value from the interfaces of the same levels gets weights ½ and ½ exactly,
// and no midpoint is ever rounded before it is subtracted.
func linearWeights(slo, shi, tlo, thi []float64, ex Extrapolation) *weights.CSR {
	n := len(slo)
	ps := make([]float64, n) // rounded midpoints, only to find the bracketing pair
	for j := range ps {
		ps[j] = 0.5 * (slo[j] + shi[j])
	}
	cols := make([][]int32, len(tlo))
	vals := make([][]float64, len(tlo))
	for t := range tlo {
		x := 0.5 * (tlo[t] + thi[t])
		below := pairDist(tlo[t], thi[t], slo[0], shi[0]) <= 0
		above := pairDist(tlo[t], thi[t], slo[n-1], shi[n-1]) >= 0
		if n == 1 || (ex == ExtrapolateConstant && (below || above)) {
			j := 0
			if n > 1 && above {
				j = n - 1
			}
			cols[t], vals[t] = []int32{int32(j)}, []float64{1}
			continue
		}
		// j is the lower point of the bracketing (or, outside, the nearest) pair.
		j := sort.SearchFloat64s(ps, x) - 1
		j = min(max(j, 0), n-2)
		w1 := pairDist(tlo[t], thi[t], slo[j], shi[j]) / pairDist(slo[j+1], shi[j+1], slo[j], shi[j])
		w0 := 1 - w1
		switch {
		case w1 == 0:
			cols[t], vals[t] = []int32{int32(j)}, []float64{1}
		case w0 == 0:
			cols[t], vals[t] = []int32{int32(j + 1)}, []float64{1}
		default:
			cols[t], vals[t] = []int32{int32(j), int32(j + 1)}, []float64{w0, w1}
		}
	}
	return weights.FromRows(len(tlo), n, cols, vals)
}

// pointPairs returns, for each degree of freedom of location v, the two interfaces whose
// midpoint is its point (an interface twice for Interface).
func pointPairs(l *grids.Levels, v grids.VLocation) (lo, hi []float64) {
	z := l.Interfaces
	if v == grids.Interface {
		return z, z
	}
	return z[:len(z)-1], z[1:]
}

// Adjoint returns the adjoint W* = M_s⁻¹ Wᵀ M_t of a linear or conservative map with
// respect to the measures of its two sides (DESIGN.md §5): the prolongation that pairs
// with a restriction so that ⟨W x, y⟩_t = ⟨x, W* y⟩_s, with ⟨a, b⟩ = Σ m a b on each
// side. The measures are those of ApplyMeasureTo: the adjoint's W uses the coordinate
// thicknesses; its ApplyMeasureTo and ApplyColumnsTo take the layer measures of the same
// MassLevels as the restriction and use the measures they define on both sides.
//
// For a conservative restriction the adjoint is the conservative overlap map in the other
// direction (consistent: row sums 1). For a linear restriction it is M_s⁻¹ Wᵀ M_t
// assembled directly; it is consistent exactly when W is conservative, as the two-point
// average from interfaces to layers is (see VerticalMethod). The two level sets must span
// the same column. ppm, ppm-limited and adjoints have no adjoint here.
func (m *VerticalMap) Adjoint() (*VerticalMap, error) {
	if !sameSpan(m.Source.Interfaces, m.Target.Interfaces) {
		return nil, fmt.Errorf("remap: vertical map: the adjoint needs source and target levels over the same column")
	}
	a := &VerticalMap{
		Source: m.Target, Target: m.Source, SourceLoc: m.TargetLoc, TargetLoc: m.SourceLoc,
		Method: VerticalAdjoint, Extrapolation: m.Extrapolation, restriction: m.Method,
		ref: m.ref, thick: m.thick, srcFrac: m.dstFrac, dstFrac: m.srcFrac,
	}
	switch m.Method {
	case VerticalConservative:
		a.core = &core{p: m.core.p.reversed(m.W.Rows), srcFrac: a.srcFrac, dstFrac: a.dstFrac, thick: a.thick, recon: reconConstant}
		a.W = a.core.matrix()
	case VerticalLinear:
		a.rt = m.W.T()
		ms := make([]float64, m.W.Cols)
		mt := make([]float64, m.W.Rows)
		m.SourceMeasureTo(ms, nil)
		m.TargetMeasureTo(mt, nil)
		a.W = a.rt.Clone()
		inv := make([]float64, len(ms))
		for i, v := range ms {
			inv[i] = 1 / v
		}
		a.W.ScaleRows(inv, mt)
	default:
		return nil, fmt.Errorf("remap: vertical map: no adjoint for method %v (only linear and conservative restrictions)", m.Method)
	}
	return a, nil
}

// Restriction returns, for an adjoint map, the method of the map it is the adjoint of, and
// zero otherwise.
func (m *VerticalMap) Restriction() VerticalMethod { return m.restriction }

// MassLevels returns the levels whose layers carry the measure passed to ApplyMeasureTo,
// ApplyColumnsTo, SourceMeasureTo and TargetMeasureTo: the source levels, or for an
// adjoint the source levels of its restriction.
func (m *VerticalMap) MassLevels() *grids.Levels { return m.ref }

// SourceMeasureTo sets dst to the measure of each source degree of freedom implied by the
// layer measures mass (one per layer of MassLevels, nil for their thickness in the
// coordinate): the mass itself for source layers of MassLevels; for interfaces, the mass of
// the dual layer (half of each adjacent layer, the surface and top interfaces getting half
// a layer); in general Σ_ℓ m_ℓ |V ∩ L_ℓ|/|L_ℓ|, the mass density being uniform in the
// coordinate inside each layer ℓ. It panics on length mismatch.
func (m *VerticalMap) SourceMeasureTo(dst, mass []float64) {
	m.checkMeasure(dst, m.srcFrac.Rows, mass)
	measureTo(dst, m.srcFrac, mass, m.thick)
}

// TargetMeasureTo sets dst to the measure of each target degree of freedom implied by the
// layer measures mass, by the same rule as SourceMeasureTo: the target's volumes are placed
// in the column through the coordinate, and each receives the share of the source
// column's measure that lies inside it. This is the measure with which the overlap maps
// conserve: Σ_t m_t q_t = Σ_s m_s q_s. For a linear map whose target reaches outside the
// source column only the part inside counts. It panics on length mismatch.
func (m *VerticalMap) TargetMeasureTo(dst, mass []float64) {
	m.checkMeasure(dst, m.dstFrac.Rows, mass)
	measureTo(dst, m.dstFrac, mass, m.thick)
}

func (m *VerticalMap) checkMeasure(dst []float64, n int, mass []float64) {
	if len(dst) != n || (mass != nil && len(mass) != m.ref.NLev()) {
		panic(fmt.Sprintf("remap: vertical measure: dst %d (want %d), mass %d (want %d)", len(dst), n, len(mass), m.ref.NLev()))
	}
}

// NSource returns the number of source degrees of freedom per column.
func (m *VerticalMap) NSource() int { return m.srcFrac.Rows }

// NTarget returns the number of target degrees of freedom per column.
func (m *VerticalMap) NTarget() int { return m.dstFrac.Rows }

// ApplyTo maps one column with the coordinate measure: dst = W·src, or the limited PPM
// remap for VerticalPPMLimited. It panics if len(dst) ≠ NTarget() or len(src) ≠ NSource().
func (m *VerticalMap) ApplyTo(dst, src []float64) {
	m.checkLens(dst, src, 1)
	if m.W != nil {
		applyCSR(dst, src, m.W)
		return
	}
	m.core.applyTo(dst, src, nil, m.core.newScratch())
}

// ApplyMeasureTo maps one column whose layers (of MassLevels) have the measures mass:
// thickness (physical Δz of a terrain-following column) or mass (ρΔz, Δp/g). nil means the
// coordinate thickness and gives ApplyTo's result. What the measure does, per method:
//
//   - conservative and the adjoint of conservative: measure-weighted overlap,
//     q_t = Σ_s (G_ts(m) q_s) / m_t with G_ts(m) = Σ_ℓ g_tsℓ m_ℓ the measure of the
//     overlap, so Σ_t m_t q_t = Σ_s m_s q_s;
//   - ppm and ppm-limited: the parabolas are built and integrated in the cumulative-measure
//     coordinate of the column, so the remap is mass-weighted and conserves Σ m q;
//   - adjoint of linear: M_s(m)⁻¹ Wᵀ M_t(m) with the measures of both sides from mass;
//   - linear: interpolation stays in the levels' coordinate; mass is checked and unused.
//
// It returns an error naming the layer when a measure is not positive and finite, and
// panics on length mismatch.
func (m *VerticalMap) ApplyMeasureTo(dst, src, mass []float64) error {
	m.checkLens(dst, src, 1)
	if mass == nil {
		m.ApplyTo(dst, src)
		return nil
	}
	if err := m.checkMass(mass, 1); err != nil {
		return err
	}
	k := m.newWork()
	m.columnTo(dst, src, mass, k)
	return nil
}

// ApplyColumnsTo maps ncol columns stored level-fastest: src[c*NSource()+k] is source
// degree of freedom k of column c, dst[c*NTarget()+k] likewise, and mass (nil for the
// coordinate thickness in every column) holds MassLevels().NLev() layer measures per
// column in the same order. Columns run in parallel (GOMAXPROCS goroutines); each column's
// arithmetic is that of ApplyMeasureTo, so results do not depend on the number of
// goroutines. It returns an error naming the column and layer of the first measure that
// is not positive and finite (dst is then untouched), and panics on length mismatch.
func (m *VerticalMap) ApplyColumnsTo(dst, src, mass []float64) error {
	ns, nt := m.NSource(), m.NTarget()
	ncol := len(src) / ns
	m.checkLens(dst, src, ncol)
	if mass != nil {
		if err := m.checkMass(mass, ncol); err != nil {
			return err
		}
	}
	nr := m.ref.NLev()
	par.For(ncol, 0, 64, func(lo, hi int) {
		var k *work
		for c := lo; c < hi; c++ {
			d, s := dst[c*nt:(c+1)*nt], src[c*ns:(c+1)*ns]
			if mass == nil && m.W != nil {
				applyCSR(d, s, m.W)
				continue
			}
			if k == nil {
				k = m.newWork()
			}
			var mc []float64
			if mass != nil {
				mc = mass[c*nr : (c+1)*nr]
			}
			m.columnTo(d, s, mc, k)
		}
	})
	return nil
}

// work is one goroutine's scratch for columnTo.
type work struct {
	c      *scratch
	ms, mt []float64
	tmp    []float64
}

func (m *VerticalMap) newWork() *work {
	k := &work{}
	if m.core != nil {
		k.c = m.core.newScratch()
	}
	if m.rt != nil {
		k.ms = make([]float64, m.NSource())
		k.mt = make([]float64, m.NTarget())
		k.tmp = make([]float64, m.NSource())
	}
	return k
}

// columnTo maps one column with layer measures mass (nil: coordinate thickness).
func (m *VerticalMap) columnTo(dst, src, mass []float64, k *work) {
	switch {
	case m.core != nil:
		m.core.applyTo(dst, src, mass, k.c)
	case m.rt != nil:
		// dst_a = Σ_b Wᵀ_ab μ_b y_b / μ_a, μ the measures of both sides.
		measureTo(k.ms, m.srcFrac, mass, m.thick)
		measureTo(k.mt, m.dstFrac, mass, m.thick)
		for b, y := range src {
			k.tmp[b] = k.ms[b] * y
		}
		applyCSR(dst, k.tmp, m.rt)
		for a := range dst {
			dst[a] /= k.mt[a]
		}
	default:
		applyCSR(dst, src, m.W)
	}
}

func (m *VerticalMap) checkLens(dst, src []float64, ncol int) {
	ns, nt := m.NSource(), m.NTarget()
	if len(src) != ncol*ns || len(dst) != ncol*nt {
		panic(fmt.Sprintf("remap: vertical apply: src %d, dst %d for %d column(s) of %d → %d values", len(src), len(dst), ncol, ns, nt))
	}
}

func (m *VerticalMap) checkMass(mass []float64, ncol int) error {
	nr := m.ref.NLev()
	if len(mass) != ncol*nr {
		panic(fmt.Sprintf("remap: vertical apply: %d layer measures for %d column(s) of %d layers", len(mass), ncol, nr))
	}
	for i, v := range mass {
		if !(v > 0) || math.IsInf(v, 0) {
			return fmt.Errorf("remap: vertical apply: layer measure of column %d, layer %d is %v; measures must be positive and finite", i/nr, i%nr, v)
		}
	}
	return nil
}

// applyCSR is dst = W·src on one goroutine (the per-column kernel; W is small).
func applyCSR(dst, src []float64, w *weights.CSR) {
	for i := range dst {
		var s float64
		for k := w.RowStart[i]; k < w.RowStart[i+1]; k++ {
			s += w.Values[k] * src[w.ColIndex[k]]
		}
		dst[i] = s
	}
}
