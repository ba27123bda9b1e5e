package remap

import "fmt"

// VerticalMethod names how a vertical map is built. This comment is the design note of
// the vertical maps (files vertical*.go).
//
// # Columns, volumes and measures
//
// A column has interfaces z₀ < z₁ < … < z_N from the surface (index 0) to the model top, in
// the levels' coordinate (height, or the normalised coordinate η of grids.Normalized),
// and N layers between them. Layer values sit at the layer midpoints (Lorenz placement,
// and the wind); interface values at the interfaces (Charney–Phillips temperature).
//
// The overlap methods give every degree of freedom a control volume (VolumeEdges): layer
// k owns [z_k, z_{k+1}]; interface k owns its dual layer [z_{k−½}, z_{k+½}] between the
// adjacent midpoints, cut to half a layer at the surface and at the model top. Both tile
// the column once. Interface values are taken as the means over their dual layers; that
// is exact for linear profiles in the interior of uniform levels and first-order
// accurate in the surface and top half layers and on stretched levels.
//
// The measure of a column (what makes an integral Σ m q) is given per layer ℓ of the
// source levels (VerticalMap.MassLevels) at apply time: by default the thickness in the
// coordinate; or the physical thickness Δz of a terrain-following column; or the mass
// ρΔz or Δp/g of a height- or mass-based column. Inside a layer the measure is spread
// uniformly in the coordinate, so any volume V gets m(V) = Σ_ℓ m_ℓ |V ∩ L_ℓ| / |L_ℓ|. The
// stored factors are therefore pure coordinate fractions,
//
//	g_tsℓ = |V_t ∩ V_s ∩ L_ℓ| / |L_ℓ|,
//
// the same in every column: terrain-following and mass-based levels need no per-column
// weights. The target's measure is defined from the source's by the same rule,
// m_t = Σ_ℓ m_ℓ Σ_s g_tsℓ (VerticalMap.TargetMeasureTo): the target levels are placed in
// each column through the coordinate and each target volume receives the share of the
// source column's measure that lies inside it. A source layer's measure is its own m_ℓ; an
// interface's is half of each adjacent layer's (exactly half: midpoints are never rounded
// before they are subtracted).
//
// # Methods
//
// VerticalLinear interpolates linearly in the coordinate between the points of the
// source: q_t = (1−w) q_j + w q_{j+1}, w = (x_t − x_j)/(x_{j+1} − x_j). From interfaces to
// the layers of the same levels this is the two-point average (q_k + q_{k+1})/2, with
// weights exactly ½. From layers to interfaces it is
// (Δ_k q_{k−1} + Δ_{k−1} q_k)/(Δ_{k−1} + Δ_k) inside the column. The surface and the model
// top lie half a layer beyond the outermost midpoints; there the rule is the Extrapolation
// option: ExtrapolateLinear (default) continues the line through the two nearest points
// (weights 3/2 and −1/2 on uniform levels), so linear profiles — a constant lapse rate —
// are reproduced at every target; ExtrapolateConstant copies the nearest value, which
// keeps every weight in [0, 1] (no new extrema, no negative tracers) but is first order
// at the ends. Both are common practice; we default to the one that keeps the method's
// order at the boundary and leave the bounded one for tracers. Rows sum to 1 (to 4e-16,
// tested). The measure does not enter linear maps. Target levels may reach beyond the
// source column, where the same rule extrapolates.
//
// VerticalConservative is first-order (piecewise constant) overlap remapping of volume
// means, weighted by the measure supplied at apply time:
//
//	q_t = Σ_s G_ts q_s / m_t,   G_ts = Σ_ℓ g_tsℓ m_ℓ,   m_t = Σ_s G_ts,
//
// so that Σ_t m_t q_t = Σ_s Σ_t G_ts q_s = Σ_s m_s q_s. With the coordinate thickness this
// is W_ts = |V_t ∩ V_s| / |V_t|, the map W stores. Guarantees (tested): Σ m q kept to 1e-13
// relative (measured ≤ 2e-16) for thickness and mass weights, the same stored map serving
// terrain-following columns of different thickness and mass; rows sum to 1 (constants
// kept); weights in [0, 1] (bounded); first order (observed order 0.98–0.99 on smooth
// profiles, uniform and stretched levels).
//
// VerticalPPM reconstructs the source volume means as the piecewise-parabolic profile of
// Colella & Woodward (1984, J. Comput. Phys. 54:174–201, "CW84") and integrates it over the
// target volumes. In cell s (width Δ_s in the measure coordinate, mean q̄_s) with ξ ∈ [0, 1]
// across the cell,
//
//	a(ξ) = a_L + ξ(Δa + a₆(1 − ξ)),  Δa = a_R − a_L,  a₆ = 6(q̄ − (a_L + a_R)/2)
//
// (CW84 eqs. 1.4–1.5), whose mean over the cell is q̄ exactly. The edge values a_{j+½} are
// CW84 eq. 1.6 with the slopes δa_j of eq. 1.7 on stretched levels; on uniform levels they
// reduce to (−q̄_{j−1} + 7q̄_j + 7q̄_{j+1} − q̄_{j+2})/12. Eq. 1.6 is the derivative of the
// quartic that interpolates the cumulative integral ∫q at the five interfaces around the
// edge (tested to 1e-12 on random widths), so it is exact for cubic profiles on any
// widths. Boundary treatment: the two edges nearest the surface and the two nearest the
// model top, whose centred stencil would leave the column, use the same construction on
// the five interfaces nearest the boundary (one-sided; on uniform levels the surface edge
// is (25q̄₀ − 23q̄₁ + 13q̄₂ − 3q̄₃)/12 and the next (3q̄₀ + 13q̄₁ − 5q̄₂ + q̄₃)/12), so they too
// are exact for cubics; columns of fewer than four volumes use all their interfaces. The
// unlimited scheme is linear in the data and is stored as a matrix (about 6 entries per
// row). Guarantees (tested): the exact means of any quadratic are remapped exactly in
// every target volume, interior and boundary, on uniform, stretched and random levels
// (CW84 state it for the interior of uniform grids; the non-uniform eq. 1.6 and the
// one-sided edges extend it); Σ m q kept to 1e-13; rows sum to 1; third order on smooth
// profiles (observed 3.0 on uniform levels at 256 → 512 layers; on stretched levels 3.5
// there, approaching 3 from above because the O(Δ⁴) edge error dominates at coarse
// resolution). It is not bounded: a step overshoots by 9% (tested), and weights are
// negative (most negative −1.13, largest row sum of |W| 3.5 on 60-layer levels, both at the
// surface). The guarantees are stated to rounding of the size of the terms summed (Σ|W q|),
// on levels and measures whose neighbouring layers differ by at most 10× (models use under
// 1.5×): across larger jumps the edge stencils' weights grow with the ratio (order 10⁴ at
// 256×) and roundings with them. With layer masses (ApplyMeasureTo) the cells' widths and
// the integration are in the cumulative-mass coordinate of the column, which makes the
// remap mass-weighted and keeps Σ m q.
//
// VerticalPPMLimited adds the CW84 monotonicity limiter, which makes the map nonlinear, so
// it has no matrix (W is nil; apply with ApplyTo, ApplyMeasureTo, ApplyColumnsTo or
// RemapPPMColumnTo). The slopes are limited (CW84 eq. 1.8: zero at a local extremum of
// the means, otherwise at most twice either one-sided difference), every edge value
// between two cells is clipped to the range of their means, and each cell's parabola is
// adjusted (CW84 eq. 1.10): constant when its mean is a local extremum, otherwise the edge
// nearer the mean is moved so the parabola has no extremum inside the cell. The lowest and
// highest source volumes are reconstructed as constants: with the bounds kept, a monotone
// profile cannot be extended beyond the boundary cell's mean, so any non-constant
// reconstruction there would leave the data's range. Guarantees (tested): every target
// value lies within [min, max] of the source values of its column, monotone data stay
// monotone; Σ m q kept to 1e-13; constants kept, and linear profiles in targets that touch
// no boundary source volume. The limiter's details (eqs. 1.8 and 1.10) are from memory of
// CW84; they match the uniform-grid form in common use.
//
// VerticalAdjoint is made by VerticalMap.Adjoint from a linear or conservative restriction
// W: the prolongation W* = M_s⁻¹ Wᵀ M_t with respect to the measures of both sides, so that
// ⟨W x, y⟩_t = ⟨x, W* y⟩_s (DESIGN.md §5; tested to 1e-13 with coordinate and with mass
// measures). W conservative ⇔ W* consistent, and W consistent ⇔ W* conservative. The
// adjoint of a conservative map is the conservative overlap map in the other direction.
// Prolonging layer increments y to interfaces with the adjoint of the average gives, for
// layer measures m_k,
//
//	interface k (0 < k < N):  (m_{k−1} y_{k−1} + m_k y_k) / (m_{k−1} + m_k),
//	surface (k = 0): y_0,   model top (k = N): y_{N−1},
//
// each layer weighted by its own measure, where linear interpolation weights each by the
// other's thickness; the two agree inside uniform levels. The average is conservative for
// the dual-layer measure, so this adjoint keeps constants; and its output has no zigzag
// component: ⟨W* y, z⟩_s = ⟨y, W z⟩_t = 0 for the zigzag z (tested; linear interpolation
// of a random increment has a zigzag share of 0.15–0.2 on stretched levels).
//
// # Interfaces to layers and the vertical zigzag
//
// The zigzag (−1)^k on interfaces is the mode Lorenz-placed physics cannot see
// (Arakawa & Konor 1996, Mon. Wea. Rev. 124:511–528). Averaging interfaces to the layers
// of the same levels maps it to zero (exactly: the weights are ½), and the null space of
// the average is that one vector (rank N from N+1 values; tested). Any map from N+1
// interface values to N layer values has a null space, so the question for an
// alternative is only which vector it hides. Measured facts (tested):
//
//   - first-order conservative from dual layers to the layers of the same levels is the
//     average, entry for entry, on any spacing (each layer is the upper half of one dual
//     layer and the lower half of the next), so it hides the zigzag too (response ≤ 6e-17);
//   - onto the dual layers themselves it is the identity and passes the zigzag whole;
//   - unlimited PPM from dual layers sees it where its stencil is not symmetric about the
//     layer: the three layers at each end of uniform levels (response 0.043, 0.012, 0.031
//     from the surface; zero to 6e-16 elsewhere, by reflection symmetry) and every layer of
//     stretched levels (about ±0.15 at a thickness ratio of 1.13 between layers).
//
// So no local, reflection-symmetric restriction on uniform levels sees the zigzag; the
// reliable remedy is on the prolongation side, where the adjoint never creates it.
//
// # Applying in 3-D
//
// A field on many columns is stored level-fastest, index = column*nlev + k
// (ApplyColumnsTo, Factored with LevelFastest); Factored also takes the column-fastest
// order of NetCDF variables. A horizontal ⊗ vertical map is applied as two sparse passes,
// never expanded (Factored; tested against the expanded Kronecker product).
// BenchmarkVerticalApply gives the cost on 100 000 columns × 60 layers.
type VerticalMethod uint8

const (
	// VerticalLinear interpolates linearly in the levels' coordinate ("linear").
	VerticalLinear VerticalMethod = iota + 1
	// VerticalConservative is first-order overlap remapping, thickness- or
	// mass-weighted ("conservative").
	VerticalConservative
	// VerticalPPM is unlimited piecewise-parabolic remapping, a linear map ("ppm").
	VerticalPPM
	// VerticalPPMLimited is PPM with the CW84 monotonicity limiter, not linear
	// ("ppm-limited").
	VerticalPPMLimited
	// VerticalAdjoint is the adjoint of a restriction, made by VerticalMap.Adjoint
	// ("adjoint").
	VerticalAdjoint
)

var verticalMethodNames = map[VerticalMethod]string{
	VerticalLinear: "linear", VerticalConservative: "conservative", VerticalPPM: "ppm",
	VerticalPPMLimited: "ppm-limited", VerticalAdjoint: "adjoint",
}

func (m VerticalMethod) String() string {
	if s, ok := verticalMethodNames[m]; ok {
		return s
	}
	return fmt.Sprintf("VerticalMethod(%d)", uint8(m))
}

// ParseVerticalMethod converts the names String writes: linear, conservative, ppm,
// ppm-limited, adjoint.
func ParseVerticalMethod(s string) (VerticalMethod, error) {
	for m, name := range verticalMethodNames {
		if name == s {
			return m, nil
		}
	}
	return 0, fmt.Errorf("unknown vertical method %q (want linear, conservative, ppm, ppm-limited or adjoint)", s)
}

// Extrapolation is the rule of a linear vertical map beyond the outermost source points
// (the surface and model-top halves of the end layers, or targets outside the source
// column).
type Extrapolation uint8

const (
	// ExtrapolateLinear continues the line through the two nearest source points: exact
	// for linear profiles, may leave the data's range. The default.
	ExtrapolateLinear Extrapolation = iota
	// ExtrapolateConstant copies the nearest source value: bounded, first order there.
	ExtrapolateConstant
)

func (e Extrapolation) String() string {
	switch e {
	case ExtrapolateLinear:
		return "linear"
	case ExtrapolateConstant:
		return "constant"
	}
	return fmt.Sprintf("Extrapolation(%d)", uint8(e))
}
