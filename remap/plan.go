package remap

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strings"

	"github.com/BurntSushi/toml"

	"github.com/colbridge/colbridge/grids"
)

// Plan is a coupling plan: the dynamics mesh and levels, the physics columns, and one entry
// per variable saying how it goes to the columns and how its increments come back. It is
// read from TOML (see ReadPlan for the format).
type Plan struct {
	Title     string         `toml:"title"`
	Dynamics  PlanSide       `toml:"dynamics"`
	Columns   PlanSide       `toml:"columns"`
	Variables []PlanVariable `toml:"variable"`

	// Path is the plan file; mesh paths are relative to its directory.
	Path string `toml:"-"`
	// Hash is the SHA-256 of the plan file's bytes.
	Hash string `toml:"-"`
}

// PlanSide names a mesh file and its levels.
type PlanSide struct {
	Mesh   string      `toml:"mesh"`
	Levels *PlanLevels `toml:"levels"`
}

// PlanLevels describes levels either by explicit interfaces or by a generator.
type PlanLevels struct {
	Coordinate string    `toml:"coordinate"` // "height" (default) or "normalized"
	Interfaces []float64 `toml:"interfaces"` // explicit, surface first
	NLev       int       `toml:"nlev"`       // or generated: nlev layers ...
	Bottom     float64   `toml:"bottom"`     // ... from bottom ...
	Top        float64   `toml:"top"`        // ... to top ...
	Stretch    float64   `toml:"stretch"`    // ... stretched (grids.NewStretchedLevels)
}

// PlanVariable is one field of the coupling.
type PlanVariable struct {
	// Name of the variable in the dynamics' files.
	Name string `toml:"name"`
	// Source and Target locations, "cell/layer", "edge-normal/layer", "cell/interface" ...
	// The target's horizontal part must be "cell" (the columns).
	Source string `toml:"source"`
	Target string `toml:"target"`
	// Method and Order of the horizontal cell→cell part (conservative 1–4, interpolate 1,
	// nearest 0). Default conservative 1.
	Method string `toml:"method"`
	Order  int    `toml:"order"`
	// Vertical method: linear, conservative, ppm (default: conservative between layers,
	// linear from interfaces). Ignored for 2-D fields.
	Vertical string `toml:"vertical"`
	// Measure names the field an apply step reads as the layer measure (mass weighting),
	// for example "layer_mass"; empty means thickness weighting.
	Measure string `toml:"measure"`
	// Components names the column variables of a vector (east, north) for edge locations.
	Components []string `toml:"components"`
	// Prolongation of increments back to the dynamics: "adjoint" (default: the adjoint
	// with respect to the two inner products), "average" (plain averaging, for
	// comparison or for skewed meshes), or "none".
	Prolongation string `toml:"prolongation"`
}

// PlanError is a problem with a plan: the file, the entry and what is wrong.
type PlanError struct {
	Path  string
	Entry string // "variable \"theta\"", "dynamics", ...
	Msg   string
}

func (e *PlanError) Error() string {
	if e.Entry == "" {
		return fmt.Sprintf("%s: %s", e.Path, e.Msg)
	}
	return fmt.Sprintf("%s: %s: %s", e.Path, e.Entry, e.Msg)
}

// Prolongation choices.
const (
	ProlongAdjoint = "adjoint"
	ProlongAverage = "average"
	ProlongNone    = "none"
)

var nameRE = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_.-]*$`)

// ReadPlan reads and checks a coupling plan. Format (TOML):
//
//	title = "..."
//	[dynamics]
//	mesh = "dynamics_mesh.nc"              # relative to the plan file
//	levels = { nlev = 30, top = 30000.0, stretch = 2.0 }   # or interfaces = [...]
//	[columns]
//	mesh = "columns_mesh.nc"               # levels default to the dynamics' levels
//	[[variable]]
//	name = "theta"
//	source = "cell/interface"
//	target = "cell/layer"
//	method = "conservative"
//	order = 2
//	vertical = "linear"
//	[[variable]]
//	name = "u"
//	source = "edge-normal/layer"
//	target = "cell/layer"
//	components = ["u_east", "u_north"]
//	prolongation = "average"
//
// Unknown keys, unknown locations or methods, duplicate names, vectors without two
// components, measures on non-conservative maps and the like are refused with a
// *PlanError naming the entry.
func ReadPlan(path string) (*Plan, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var p Plan
	md, err := toml.NewDecoder(bytes.NewReader(data)).Decode(&p)
	if err != nil {
		return nil, &PlanError{Path: path, Msg: "not valid TOML: " + err.Error()}
	}
	if und := md.Undecoded(); len(und) > 0 {
		keys := make([]string, len(und))
		for i, k := range und {
			keys[i] = k.String()
		}
		return nil, &PlanError{Path: path, Msg: "unknown keys: " + strings.Join(keys, ", ")}
	}
	p.Path = path
	sum := sha256.Sum256(data)
	p.Hash = hex.EncodeToString(sum[:])
	return &p, p.check()
}

func (p *Plan) errf(entry, format string, args ...any) error {
	return &PlanError{Path: p.Path, Entry: entry, Msg: fmt.Sprintf(format, args...)}
}

// MeshPath returns the path of a plan side's mesh file.
func (p *Plan) MeshPath(s PlanSide) string {
	if filepath.IsAbs(s.Mesh) {
		return s.Mesh
	}
	return filepath.Join(filepath.Dir(p.Path), s.Mesh)
}

func (p *Plan) check() error {
	if p.Dynamics.Mesh == "" {
		return p.errf("dynamics", "needs a mesh file (mesh = \"...\")")
	}
	if p.Columns.Mesh == "" {
		return p.errf("columns", "needs a mesh file (mesh = \"...\")")
	}
	for _, s := range []struct {
		name string
		side PlanSide
	}{{"dynamics", p.Dynamics}, {"columns", p.Columns}} {
		if s.side.Levels != nil {
			if _, err := s.side.Levels.Build(); err != nil {
				return p.errf(s.name+".levels", "%v", err)
			}
		}
	}
	if len(p.Variables) == 0 {
		return p.errf("", "names no variables ([[variable]] entries)")
	}
	seen := map[string]bool{}
	for i := range p.Variables {
		v := &p.Variables[i]
		entry := fmt.Sprintf("variable %d", i+1)
		if v.Name != "" {
			entry = fmt.Sprintf("variable %q", v.Name)
		}
		if !nameRE.MatchString(v.Name) {
			return p.errf(entry, "needs a name of letters, digits, _ . - (have %q)", v.Name)
		}
		if seen[v.Name] {
			return p.errf(entry, "is listed twice")
		}
		seen[v.Name] = true
		src, err := grids.ParseLocation(v.Source)
		if err != nil {
			return p.errf(entry, "source: %v", err)
		}
		tgt, err := grids.ParseLocation(v.Target)
		if err != nil {
			return p.errf(entry, "target: %v", err)
		}
		if tgt.H != grids.Cell {
			return p.errf(entry, "target %q: the columns hold cell values; the target's horizontal part must be cell", v.Target)
		}
		if (src.V == grids.NoLevels) != (tgt.V == grids.NoLevels) {
			return p.errf(entry, "source %q and target %q must both have levels or both be 2-D", v.Source, v.Target)
		}
		if src.V != grids.NoLevels && p.Dynamics.Levels == nil {
			return p.errf(entry, "a 3-D variable needs [dynamics] levels")
		}
		if v.Method == "" {
			v.Method, v.Order = Conservative, max(v.Order, 1)
		}
		switch v.Method {
		case Conservative:
			if v.Order < 1 || v.Order > 4 {
				return p.errf(entry, "conservative order must be 1 to 4, not %d", v.Order)
			}
		case Interpolate:
			if v.Order == 0 {
				v.Order = 1
			}
			if v.Order != 1 {
				return p.errf(entry, "interpolation has order 1, not %d", v.Order)
			}
		case Nearest:
			if v.Order > 1 {
				return p.errf(entry, "nearest has order 0, not %d", v.Order)
			}
		default:
			return p.errf(entry, "method %q (want %s, %s or %s)", v.Method, Conservative, Interpolate, Nearest)
		}
		vector := src.H == grids.EdgeNormal || src.H == grids.EdgeTangential
		if vector && len(v.Components) != 2 {
			return p.errf(entry, "source %q holds vector components: give components = [\"east name\", \"north name\"]", v.Source)
		}
		if !vector && len(v.Components) != 0 {
			return p.errf(entry, "components are only for edge (vector) sources")
		}
		for _, c := range v.Components {
			if !nameRE.MatchString(c) {
				return p.errf(entry, "component name %q is not a valid name", c)
			}
			if seen[c] {
				return p.errf(entry, "component %q clashes with another name", c)
			}
			seen[c] = true
		}
		if src.V != grids.NoLevels {
			if v.Vertical == "" {
				v.Vertical = VerticalConservative.String()
				if src.V == grids.Interface || tgt.V == grids.Interface {
					v.Vertical = VerticalLinear.String()
				}
			}
			vm, err := ParseVerticalMethod(v.Vertical)
			if err != nil {
				return p.errf(entry, "vertical: %v", err)
			}
			if vm == VerticalAdjoint || vm == VerticalPPMLimited {
				return p.errf(entry, "vertical %q is not a restriction a plan can store (use linear, conservative or ppm)", v.Vertical)
			}
		} else if v.Vertical != "" {
			return p.errf(entry, "vertical method %q given for a 2-D variable", v.Vertical)
		}
		if v.Measure != "" {
			if !nameRE.MatchString(v.Measure) {
				return p.errf(entry, "measure %q is not a valid variable name", v.Measure)
			}
			if src.V == grids.NoLevels {
				return p.errf(entry, "a measure (mass weighting) needs levels")
			}
		}
		switch v.Prolongation {
		case "":
			v.Prolongation = ProlongAdjoint
		case ProlongAdjoint, ProlongAverage, ProlongNone:
		default:
			return p.errf(entry, "prolongation %q (want %s, %s or %s)", v.Prolongation, ProlongAdjoint, ProlongAverage, ProlongNone)
		}
		if v.Prolongation == ProlongAverage && !vector && src.H != grids.Cell {
			return p.errf(entry, "prolongation %q is defined for cell and edge sources", v.Prolongation)
		}
	}
	return nil
}

// Build returns the levels described.
func (l *PlanLevels) Build() (*grids.Levels, error) {
	coord := grids.Height
	if l.Coordinate != "" {
		c, err := grids.ParseVerticalCoord(l.Coordinate)
		if err != nil {
			return nil, err
		}
		coord = c
	}
	if len(l.Interfaces) > 0 {
		if l.NLev != 0 || l.Top != 0 || l.Stretch != 0 {
			return nil, errors.New("give either interfaces or nlev/bottom/top/stretch, not both")
		}
		return grids.NewLevels(coord, append([]float64(nil), l.Interfaces...))
	}
	return grids.NewStretchedLevels(coord, l.NLev, l.Bottom, l.Top, l.Stretch)
}
