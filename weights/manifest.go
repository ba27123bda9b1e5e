package weights

import (
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// ManifestFormat identifies the manifest schema; it changes when a field changes meaning.
const ManifestFormat = "colbridge-bundle-1"

// ManifestName is the manifest's file name inside a bundle directory.
const ManifestName = "manifest.json"

// MeshRef names a mesh file (relative to the bundle directory) and the fingerprint of the
// mesh it held.
type MeshRef struct {
	File        string `json:"file"`
	Name        string `json:"name,omitempty"`
	Fingerprint string `json:"fingerprint"`
}

// LevelsRef describes the levels of one side of a coupling.
type LevelsRef struct {
	Coord      string    `json:"coordinate"`
	Interfaces []float64 `json:"interfaces"`
	Staggering string    `json:"staggering,omitempty"`
}

// ManifestEntry is one map of a bundle.
type ManifestEntry struct {
	// Name of the map (unique in the bundle), its file relative to the bundle directory.
	Name string `json:"name"`
	File string `json:"file"`
	// Variable is the plan variable the map serves (a field name in model files).
	Variable string `json:"variable"`
	// Direction is "restriction" (dynamics → columns) or "prolongation" (back).
	Direction      string `json:"direction"`
	SourceLocation string `json:"source_location"`
	TargetLocation string `json:"target_location"`
	Method         string `json:"method"`
	Order          int    `json:"order,omitempty"`
	// Partner names the map going the other way for the same variable, so the audit can
	// check the pair.
	Partner string `json:"partner,omitempty"`
	// Vertical names the vertical factor's file when the map is factored
	// horizontal ⊗ vertical.
	Vertical string `json:"vertical,omitempty"`
	// MeasureVariable names the field an apply step reads as the layer measure (mass
	// weighting).
	MeasureVariable string `json:"measure_variable,omitempty"`
	// Components names the variables of a vector pair (e.g. ["u", "v"]).
	Components []string `json:"components,omitempty"`
	Entries    int      `json:"entries"`
}

// Manifest lists the maps of a bundle.
type Manifest struct {
	Format   string          `json:"format"`
	Version  string          `json:"colbridge_version"`
	Plan     string          `json:"plan,omitempty"`
	PlanHash string          `json:"plan_sha256,omitempty"`
	Dynamics MeshRef         `json:"dynamics_mesh"`
	Columns  MeshRef         `json:"columns_mesh"`
	DynLev   *LevelsRef      `json:"dynamics_levels,omitempty"`
	ColLev   *LevelsRef      `json:"columns_levels,omitempty"`
	Maps     []ManifestEntry `json:"maps"`
}

// Find returns the entry with the given name.
func (m *Manifest) Find(name string) (*ManifestEntry, bool) {
	for i := range m.Maps {
		if m.Maps[i].Name == name {
			return &m.Maps[i], true
		}
	}
	return nil, false
}

// Encode writes the manifest as indented JSON.
func (m *Manifest) Encode(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(m)
}

// ReadManifest reads dir/manifest.json and checks its format and that names are unique.
func ReadManifest(dir string) (*Manifest, error) {
	path := filepath.Join(dir, ManifestName)
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	dec := json.NewDecoder(f)
	dec.DisallowUnknownFields()
	var m Manifest
	if err := dec.Decode(&m); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	if m.Format != ManifestFormat {
		return nil, fmt.Errorf("%s: format %q, this colbridge reads %q", path, m.Format, ManifestFormat)
	}
	seen := map[string]bool{}
	for _, e := range m.Maps {
		if e.Name == "" || e.File == "" {
			return nil, fmt.Errorf("%s: a map entry has no name or file", path)
		}
		if seen[e.Name] {
			return nil, fmt.Errorf("%s: map %q listed twice", path, e.Name)
		}
		if filepath.IsAbs(e.File) || !filepath.IsLocal(e.File) {
			return nil, fmt.Errorf("%s: map %q: file %q must be inside the bundle", path, e.Name, e.File)
		}
		seen[e.Name] = true
	}
	return &m, nil
}

// WriteManifest writes dir/manifest.json atomically (temporary name, then rename).
func WriteManifest(dir string, m *Manifest) error {
	f, err := os.CreateTemp(dir, ".manifest-*.json")
	if err != nil {
		return err
	}
	if err := m.Encode(f); err != nil {
		f.Close()
		os.Remove(f.Name())
		return fmt.Errorf("%s: %w", filepath.Join(dir, ManifestName), err)
	}
	if err := f.Close(); err != nil {
		os.Remove(f.Name())
		return err
	}
	return os.Rename(f.Name(), filepath.Join(dir, ManifestName))
}
