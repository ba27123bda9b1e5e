package scenario

import _ "embed"

// Plan is the demo's coupling plan (TOML), written next to its meshes by Run.
//
//go:embed coupling.toml
var Plan []byte

// PlanFile is the name the plan is written under.
const PlanFile = "coupling.toml"
