package conserve

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"
)

// summaryRow is one line of the human summary: a check, a quantity, its value and where
// or what it refers to.
type summaryRow struct {
	check, quantity, value, detail string
}

func g3(x float64) string { return fmt.Sprintf("%.3g", x) }
func e2(x float64) string { return fmt.Sprintf("%.2e", x) }

// summaryRows lays out the report for people: the same rows feed the text and HTML
// renderers.
func (r *Report) summaryRows() []summaryRow {
	var rows []summaryRow
	add := func(check, q, v, d string) { rows = append(rows, summaryRow{check, q, v, d}) }
	if c := r.Conservation; c != nil {
		where := "—"
		if c.MaxDefectAt >= 0 {
			where = fmt.Sprintf("source %d (c = %.17g)", c.MaxDefectAt, c.ColumnSumAtMax)
		}
		add("conservation", "max |c_s − 1|", e2(c.MaxDefect), where)
		add("", "rms |c_s − 1|", e2(c.RMSDefect), fmt.Sprintf("%d checked, %d partial, %d zero measure", c.Checked, c.SkippedPartial, c.SkippedZeroMeasure))
		worst, name := 0.0, "—"
		for _, f := range c.Fields {
			if a := abs64(f.RelativeError); a >= worst {
				worst, name = a, f.Name
			}
		}
		add("", "global mass error", e2(worst), "worst field: "+name)
	} else {
		add("conservation", "max |c_s − 1|", "not checked", "measures unknown")
	}
	k := r.Consistency
	where := "—"
	if k.MaxDefectAt >= 0 {
		where = fmt.Sprintf("target %d (row sum %.17g)", k.MaxDefectAt, k.RowSumAtMax)
	}
	add("consistency", "max |Σ_s W_ts − 1|", e2(k.MaxDefect), where)
	add("", "targets checked", fmt.Sprint(k.Checked), fmt.Sprintf("%d skipped, %d empty rows", k.Skipped, k.EmptyRows))
	b := r.Bounds
	neg := "—"
	if b.NegativeWeights > 0 {
		neg = fmt.Sprintf("most negative %.3g at (%d, %d)", b.MostNegative, b.MostNegativeRow, b.MostNegativeCol)
	}
	add("bounds", "negative weights", fmt.Sprint(b.NegativeWeights), neg)
	lv := 0
	for _, f := range b.Fields {
		lv += f.LocalViolations
	}
	add("", "new local extrema", fmt.Sprint(lv), "max overshoot "+e2(b.MaxLocalOvershoot)+" of max|f|")
	add("", "new global extrema", "", "max overshoot "+e2(b.MaxGlobalOvershoot)+" of max|f|")
	if p := r.Pair; p != nil {
		add("adjoint pair", "‖P − W*‖/‖W*‖", e2(p.RelativeDifference), fmt.Sprintf("largest entry difference %.3g at (%d, %d)", p.MaxEntryDifference, p.MaxEntryRow, p.MaxEntryCol))
		add("", "W conservative / consistent", e2(p.RestrictionConservation)+" / "+e2(p.RestrictionConsistency), "defects")
		add("", "P conservative / consistent", e2(p.ProlongationConservation)+" / "+e2(p.ProlongationConsistency), "defects")
		add("", "adjoint identity", e2(p.AdjointIdentityDefect), fmt.Sprintf("%d random pairs", p.Probes))
	}
	if t := r.RoundTrip; t != nil {
		add("round trip", "P∘W constants", e2(t.Dynamics.ConstantDefect), "prolongation: "+t.Prolongation)
		add("", "P∘W mass change", e2(t.Dynamics.MaxMassError), "worst test field")
		idem := "not expected"
		if t.IdempotenceExpected {
			idem = "expected (W∘P = I)"
		}
		add("", "‖R² − R‖ (P∘W)", e2(t.Dynamics.IdempotenceDefect), idem)
		add("", "W∘P constants / mass", e2(t.Physics.ConstantDefect)+" / "+e2(t.Physics.MaxMassError), "")
		add("", "‖W∘P − I‖", e2(t.PhysicsIdentityDefect), "")
	}
	if f := r.Fourier; f != nil {
		add("fourier", "lattice", fmt.Sprintf("%d × %d × %d", f.NX, f.NY, f.CellsPerLatticeCell), fmt.Sprintf("%d modes, Δ = %.3g × %.3g", f.Modes, f.DX, f.DY))
		add("", "smooth min response", g3(f.SmoothMinResponse), fmt.Sprintf("wavelengths ≥ %g Δ", f.SmoothWavelength))
		if f.CheckerboardResponse != nil {
			add("", "checkerboard response", e2(*f.CheckerboardResponse), "")
		}
		if f.Response2DX != nil {
			add("", "2Δx response", e2(*f.Response2DX), "")
		}
		add("", "noise (grid-scale share)", g3(f.NoiseMax), fmt.Sprintf("max, input wavelength %.3g Δ; mean %.3g", f.NoiseMaxWavelength, f.NoiseMean))
		if s := f.Symbol; s != nil {
			add("", "invisible dimension", fmt.Sprint(s.InvisibleDimension), fmt.Sprintf("σ ≤ %g σ_max; %d Fourier modes mostly invisible", s.Threshold, s.InvisibleFourierModes))
			add("", "smoothest invisible", g3(s.SmoothestInvisibleWavelength), "wavelength in grid lengths")
		}
	}
	if s := r.SphereNoise; s != nil {
		add("sphere noise", "high-pass share out", g3(s.OutputShareMax), fmt.Sprintf("max over %d members (mean %.3g)", s.Members, s.OutputShareMean))
		add("", "high-pass share in", g3(s.InputShareMax), fmt.Sprintf("filter leak, degrees ≤ %d, p = %d", s.SmoothMaxDegree, s.FilterPower))
	}
	if n := r.NullSpace; n != nil {
		dim := fmt.Sprint(n.Dimension)
		if !n.Exact {
			dim = "≥ " + dim
		}
		add("null space", "dimension", dim, fmt.Sprintf("%s, σ ≤ %g σ_max", n.Method, n.Threshold))
		if n.WorstModeMaxAt >= 0 {
			add("", "worst mode", e2(n.WorstModeSingularValue), fmt.Sprintf("σ/σ_max; peak at source %d", n.WorstModeMaxAt))
		}
	}
	if a := r.Accuracy; a != nil {
		for i, f := range a.Fields {
			c := ""
			if i == 0 {
				c = "accuracy"
			}
			add(c, "l1 / l2 / l∞ "+f.Name, e2(f.L1)+" / "+e2(f.L2)+" / "+e2(f.LInf), fmt.Sprintf("l∞ at target %d", f.LInfAt))
		}
	}
	if cv := r.Convergence; cv != nil {
		for i, f := range cv.Fields {
			c := ""
			if i == 0 {
				c = "convergence"
			}
			add(c, "order l1 / l2 / l∞ "+f.Name, orderString(f.OrderL1)+" / "+orderString(f.OrderL2)+" / "+orderString(f.OrderLInf), fmt.Sprintf("%d resolutions", len(f.H)))
		}
	}
	return rows
}

func orderString(p *float64) string {
	if p == nil {
		return "—"
	}
	return fmt.Sprintf("%.2f", *p)
}

func abs64(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// WriteText writes the plain-text summary: a header naming the map, one aligned table of
// checks, the gate verdict and the notes.
func WriteText(out io.Writer, r *Report) error {
	var sb strings.Builder
	fmt.Fprintf(&sb, "colbridge audit: %s, order %d, %d entries\n", orDash(r.Method), r.Order, r.Entries)
	fmt.Fprintf(&sb, "  from %-16s %8d  %s\n", r.Source.Location, r.Sources, orDash(r.Source.Mesh))
	fmt.Fprintf(&sb, "  to   %-16s %8d  %s\n\n", r.Target.Location, r.Targets, orDash(r.Target.Mesh))
	tw := tabwriter.NewWriter(&sb, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "CHECK\tQUANTITY\tVALUE\tDETAIL")
	for _, row := range r.summaryRows() {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\n", row.check, row.quantity, row.value, row.detail)
	}
	tw.Flush()
	sb.WriteString("\n")
	if r.Passed {
		sb.WriteString("verdict: all gates passed\n")
	} else {
		fmt.Fprintf(&sb, "verdict: %d gate(s) failed\n", len(r.Failures))
		for _, f := range r.Failures {
			fmt.Fprintf(&sb, "  %-28s %s (%s)\n", f.Gate, f.Reason, f.Key)
		}
	}
	if len(r.Notes) > 0 {
		sb.WriteString("\nnotes:\n")
		for _, n := range r.Notes {
			fmt.Fprintf(&sb, "  - %s\n", n)
		}
	}
	_, err := io.WriteString(out, sb.String())
	return err
}

func orDash(s string) string {
	if s == "" {
		return "—"
	}
	return s
}
