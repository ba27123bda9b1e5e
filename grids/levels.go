package grids

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
)

// VerticalCoord is the coordinate levels are given in.
type VerticalCoord uint8

const (
	// Height above the surface in metres.
	Height VerticalCoord = iota + 1
	// Normalized is a dimensionless coordinate η from 0 at the surface to 1 at the model
	// top (for example normalised height, or 1 − σ for a pressure-based σ). Terrain-
	// following and mass-based models keep their weights in η and supply layer
	// thickness or mass as a field when the weights are applied.
	Normalized
)

func (c VerticalCoord) String() string {
	switch c {
	case Height:
		return "height"
	case Normalized:
		return "normalized"
	}
	return fmt.Sprintf("VerticalCoord(%d)", uint8(c))
}

// ParseVerticalCoord converts "height" or "normalized".
func ParseVerticalCoord(s string) (VerticalCoord, error) {
	switch s {
	case "height":
		return Height, nil
	case "normalized":
		return Normalized, nil
	}
	return 0, fmt.Errorf("unknown vertical coordinate %q (want height or normalized)", s)
}

// Staggering names where a model keeps its thermodynamic variable (temperature or
// potential temperature) in the vertical.
type Staggering uint8

const (
	// Lorenz placement: temperature on layers, with the wind (nlev values per column).
	// It carries a stationary computational zigzag mode (Arakawa & Konor 1996).
	Lorenz Staggering = iota + 1
	// CharneyPhillips placement: temperature on interfaces, staggered from the wind
	// (nlev+1 values per column), free of that mode.
	CharneyPhillips
)

func (s Staggering) String() string {
	switch s {
	case Lorenz:
		return "lorenz"
	case CharneyPhillips:
		return "charney-phillips"
	}
	return fmt.Sprintf("Staggering(%d)", uint8(s))
}

// ParseStaggering converts "lorenz" or "charney-phillips".
func ParseStaggering(s string) (Staggering, error) {
	switch s {
	case "lorenz":
		return Lorenz, nil
	case "charney-phillips":
		return CharneyPhillips, nil
	}
	return 0, fmt.Errorf("unknown staggering %q (want lorenz or charney-phillips)", s)
}

// Levels is a vertical grid: nlev+1 strictly increasing interfaces from the surface
// (index 0) to the model top (index nlev), and the nlev layers between them.
type Levels struct {
	Coord      VerticalCoord
	Interfaces []float64
}

// NewLevels checks and returns levels with the given interfaces (not copied).
func NewLevels(coord VerticalCoord, interfaces []float64) (*Levels, error) {
	if coord != Height && coord != Normalized {
		return nil, fmt.Errorf("levels: unknown vertical coordinate %v", coord)
	}
	if len(interfaces) < 2 {
		return nil, fmt.Errorf("levels: need at least 2 interfaces, have %d", len(interfaces))
	}
	for k := 1; k < len(interfaces); k++ {
		if !(interfaces[k] > interfaces[k-1]) {
			return nil, fmt.Errorf("levels: interfaces must increase strictly upward; interface %d (%g) is not above interface %d (%g)", k, interfaces[k], k-1, interfaces[k-1])
		}
	}
	if math.IsInf(interfaces[0], 0) || math.IsInf(interfaces[len(interfaces)-1], 0) || math.IsNaN(interfaces[0]) {
		return nil, fmt.Errorf("levels: interfaces must be finite")
	}
	return &Levels{Coord: coord, Interfaces: interfaces}, nil
}

// NewUniformLevels returns nlev layers of equal thickness between bottom and top.
func NewUniformLevels(coord VerticalCoord, nlev int, bottom, top float64) (*Levels, error) {
	return NewStretchedLevels(coord, nlev, bottom, top, 0)
}

// NewStretchedLevels returns nlev layers between bottom and top whose thicknesses grow
// geometrically upward by the factor exp(stretch/nlev) from one layer to the next:
// interface k sits at bottom + (top−bottom)·(e^(s·k/n) − 1)/(e^s − 1). stretch = 0 gives
// uniform layers; stretch = 3 makes the top layer about e³ ≈ 20 times the bottom one,
// typical of atmospheric models that resolve the boundary layer.
func NewStretchedLevels(coord VerticalCoord, nlev int, bottom, top, stretch float64) (*Levels, error) {
	if nlev < 1 {
		return nil, fmt.Errorf("levels: nlev = %d, need at least 1", nlev)
	}
	if !(top > bottom) {
		return nil, fmt.Errorf("levels: top %g must be above bottom %g", top, bottom)
	}
	z := make([]float64, nlev+1)
	for k := range z {
		f := float64(k) / float64(nlev)
		if stretch != 0 {
			f = math.Expm1(stretch*f) / math.Expm1(stretch)
		}
		z[k] = bottom + (top-bottom)*f
	}
	z[0], z[nlev] = bottom, top
	return NewLevels(coord, z)
}

// NLev returns the number of layers.
func (l *Levels) NLev() int { return len(l.Interfaces) - 1 }

// Midpoints returns the layer midpoints (the mean of the two bounding interfaces).
func (l *Levels) Midpoints() []float64 {
	mid := make([]float64, l.NLev())
	for k := range mid {
		mid[k] = 0.5 * (l.Interfaces[k] + l.Interfaces[k+1])
	}
	return mid
}

// Thicknesses returns the layer thicknesses.
func (l *Levels) Thicknesses() []float64 {
	dz := make([]float64, l.NLev())
	for k := range dz {
		dz[k] = l.Interfaces[k+1] - l.Interfaces[k]
	}
	return dz
}

// Points returns where a field with the given staggering keeps its temperature: the layer
// midpoints for Lorenz, the interfaces for Charney–Phillips.
func (l *Levels) Points(s Staggering) []float64 {
	if s == CharneyPhillips {
		return append([]float64(nil), l.Interfaces...)
	}
	return l.Midpoints()
}

// Fingerprint returns the identity of the levels: "sha256:" and 32 hex digits of the hash
// of the coordinate and the exact interface values.
func (l *Levels) Fingerprint() string {
	h := sha256.New()
	w := fpWriter{h: h}
	h.Write([]byte("colbridge-levels-fp-1"))
	w.u64(uint64(l.Coord))
	w.u64(uint64(len(l.Interfaces)))
	for _, z := range l.Interfaces {
		w.f64(z)
	}
	w.flush()
	return "sha256:" + hex.EncodeToString(h.Sum(nil)[:16])
}
