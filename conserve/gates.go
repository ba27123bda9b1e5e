package conserve

import "fmt"

// Thresholds are the audit gates. A float limit of 0 (the zero value) switches its gate
// off; a gate that is on fails when the measured value exceeds the limit, and also when
// the check it reads did not run (a gate asked for must not pass silently). The names
// in comments are the gate names used in Failure.Gate (and as command flags).
type Thresholds struct {
	// max-conservation-defect: conservation_max_defect.
	MaxConservationDefect float64
	// max-consistency-defect: consistency_max_defect.
	MaxConsistencyDefect float64
	// max-mass-error: conservation.max_mass_error.
	MaxMassError float64
	// no-negative-weights: negative_weights must be 0.
	NoNegativeWeights bool
	// max-overshoot: bounds.max_local_overshoot (new local extrema, relative).
	MaxOvershoot float64
	// max-pair-difference: pair.relative_difference.
	MaxPairDifference float64
	// max-round-trip-mass-error: round_trip.dynamics.max_mass_error.
	MaxRoundTripMassError float64
	// max-idempotence-defect: round_trip.dynamics.idempotence_defect.
	MaxIdempotenceDefect float64
	// max-noise: fourier.noise_max on periodic planes, sphere_noise.output_share_max
	// elsewhere.
	MaxNoise float64
	// min-smooth-response: fourier.smooth_min_response must be at least this
	// (damping of resolved scales); 0 switches it off.
	MinSmoothResponse float64
	// max-invisible-wavelength: fourier.symbol.smoothest_invisible_wavelength (resolved
	// modes the physics cannot see).
	MaxInvisibleWavelength float64
	// max-l2-error: accuracy.max_l2.
	MaxL2Error float64
}

// StrictThresholds returns the gates for a first-order conservative, consistent,
// monotone map: conservation and consistency to 1e-12 (DESIGN.md §7 asks ≤ 1e-13 of
// conservative maps; 1e-12 leaves room for maps read from files), global mass to 1e-12,
// no negative weights, no new extrema beyond 1e-12.
func StrictThresholds() Thresholds {
	return Thresholds{
		MaxConservationDefect: 1e-12,
		MaxConsistencyDefect:  1e-12,
		MaxMassError:          1e-12,
		NoNegativeWeights:     true,
		MaxOvershoot:          1e-12,
	}
}

// scalarGates are the gates that judge a map of scalar fields; they do not apply to one
// component of a vector map (edge-normal ↔ east/north), whose sums of weights mix
// directions.
var scalarGates = map[string]bool{
	"max-conservation-defect": true, "max-consistency-defect": true, "max-mass-error": true,
	"no-negative-weights": true, "max-overshoot": true, "max-l2-error": true,
	"max-round-trip-mass-error": true, "max-idempotence-defect": true,
}

// Evaluate returns the failed gates of r, in the order of the Thresholds fields. For a
// component of a vector map (Report.VectorComponent) only the gates that are not about
// scalar fields are evaluated: the pair and the noise.
func (t Thresholds) Evaluate(r *Report) []Failure {
	var out []Failure
	check := func(gate, key string, limit float64, v *float64, atLeast bool) {
		if limit == 0 || (r.VectorComponent && scalarGates[gate]) {
			return
		}
		switch {
		case v == nil:
			out = append(out, Failure{Gate: gate, Key: key, Limit: limit, Reason: "not measured"})
		case !atLeast && *v > limit:
			out = append(out, Failure{Gate: gate, Key: key, Value: v, Limit: limit,
				Reason: fmt.Sprintf("%.3g exceeds %.3g", *v, limit)})
		case atLeast && *v < limit:
			out = append(out, Failure{Gate: gate, Key: key, Value: v, Limit: limit,
				Reason: fmt.Sprintf("%.3g is below %.3g", *v, limit)})
		}
	}
	ptr := func(x float64) *float64 { return &x }
	check("max-conservation-defect", "conservation_max_defect", t.MaxConservationDefect, r.ConservationMaxDefect, false)
	check("max-consistency-defect", "consistency_max_defect", t.MaxConsistencyDefect, ptr(r.ConsistencyMaxDefect), false)
	var mass *float64
	if r.Conservation != nil {
		mass = ptr(r.Conservation.MaxMassError)
	}
	check("max-mass-error", "conservation.max_mass_error", t.MaxMassError, mass, false)
	if t.NoNegativeWeights && r.NegativeWeights > 0 && !r.VectorComponent {
		v := float64(r.NegativeWeights)
		out = append(out, Failure{Gate: "no-negative-weights", Key: "negative_weights", Value: &v,
			Reason: fmt.Sprintf("%d negative weights, most negative %.3g", r.NegativeWeights, r.Bounds.MostNegative)})
	}
	check("max-overshoot", "bounds.max_local_overshoot", t.MaxOvershoot, ptr(r.Bounds.MaxLocalOvershoot), false)
	var pair, rtMass, idem *float64
	if r.Pair != nil {
		pair = ptr(r.Pair.RelativeDifference)
	}
	if r.RoundTrip != nil {
		rtMass = ptr(r.RoundTrip.Dynamics.MaxMassError)
		idem = ptr(r.RoundTrip.Dynamics.IdempotenceDefect)
	}
	check("max-pair-difference", "pair.relative_difference", t.MaxPairDifference, pair, false)
	check("max-round-trip-mass-error", "round_trip.dynamics.max_mass_error", t.MaxRoundTripMassError, rtMass, false)
	check("max-idempotence-defect", "round_trip.dynamics.idempotence_defect", t.MaxIdempotenceDefect, idem, false)
	var noise, smooth, invis *float64
	noiseKey := "fourier.noise_max"
	switch {
	case r.Fourier != nil:
		noise = ptr(r.Fourier.NoiseMax)
		smooth = ptr(r.Fourier.SmoothMinResponse)
		if r.Fourier.Symbol != nil {
			invis = ptr(r.Fourier.Symbol.SmoothestInvisibleWavelength)
		}
	case r.SphereNoise != nil:
		noise = ptr(r.SphereNoise.OutputShareMax)
		noiseKey = "sphere_noise.output_share_max"
	}
	check("max-noise", noiseKey, t.MaxNoise, noise, false)
	check("min-smooth-response", "fourier.smooth_min_response", t.MinSmoothResponse, smooth, true)
	check("max-invisible-wavelength", "fourier.symbol.smoothest_invisible_wavelength", t.MaxInvisibleWavelength, invis, false)
	var l2 *float64
	if r.Accuracy != nil {
		l2 = ptr(r.Accuracy.MaxL2)
	}
	check("max-l2-error", "accuracy.max_l2", t.MaxL2Error, l2, false)
	return out
}
