package scenario

import (
	_ "embed"
	"fmt"
	"strings"
)

// planTemplate is the demo's coupling plan (TOML) with its levels left open.
//
//go:embed coupling.toml
var planTemplate string

// plan returns the coupling plan for the scenario's levels.
func (s Scenario) plan() []byte {
	r := strings.NewReplacer("{{NLEV}}", fmt.Sprint(s.NLev), "{{TOP}}", fmt.Sprintf("%.1f", s.Top), "{{STRETCH}}", fmt.Sprintf("%.1f", s.Stretch))
	return []byte(r.Replace(planTemplate))
}

// PlanFile is the name the plan is written under.
const PlanFile = "coupling.toml"
