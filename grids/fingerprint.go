package grids

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"hash"
	"math"
)

// fingerprintVersion changes whenever the hashed byte stream changes.
const fingerprintVersion = "colbridge-mesh-fp-1"

// Fingerprint returns the mesh's identity: "sha256:" and the first 32 hex digits of the
// SHA-256 of its surface, radius, periods, vertex coordinates (exact bits), cell–vertex
// lists and edge kinds. Two meshes with the same fingerprint describe the same cells in
// the same order; maps record the fingerprints of their meshes so they are refused on
// the wrong grid. The value is computed once and cached.
func (m *Mesh) Fingerprint() string {
	m.fpOnce.Do(func() {
		h := sha256.New()
		h.Write([]byte(fingerprintVersion))
		w := fpWriter{h: h}
		w.u64(uint64(m.Surface))
		w.f64(m.Radius)
		w.f64(m.Lx)
		w.f64(m.Ly)
		w.bool(m.PeriodicX)
		w.bool(m.PeriodicY)
		w.u64(uint64(len(m.Verts)))
		for _, p := range m.Verts {
			w.f64(p.X)
			w.f64(p.Y)
			w.f64(p.Z)
		}
		w.u64(uint64(len(m.CellStart)))
		for _, s := range m.CellStart {
			w.u32(uint32(s))
		}
		for _, v := range m.CellVerts {
			w.u32(uint32(v))
		}
		if m.EdgeKinds != nil {
			// Edge kinds per cell corner, so the hash does not depend on edge numbering.
			for c := 0; c < m.NumCells(); c++ {
				for k := range m.CellVertices(c) {
					w.u32(uint32(m.cellKind(c, k)))
				}
			}
		}
		w.flush()
		m.fp = "sha256:" + hex.EncodeToString(h.Sum(nil)[:16])
	})
	return m.fp
}

// fpWriter buffers little-endian values into a hash.
type fpWriter struct {
	h   hash.Hash
	buf []byte
}

func (w *fpWriter) u64(x uint64) {
	w.buf = binary.LittleEndian.AppendUint64(w.buf, x)
	if len(w.buf) >= 1<<16 {
		w.flush()
	}
}
func (w *fpWriter) u32(x uint32) {
	w.buf = binary.LittleEndian.AppendUint32(w.buf, x)
	if len(w.buf) >= 1<<16 {
		w.flush()
	}
}
func (w *fpWriter) f64(x float64) { w.u64(math.Float64bits(x)) }
func (w *fpWriter) bool(b bool) {
	if b {
		w.u64(1)
	} else {
		w.u64(0)
	}
}
func (w *fpWriter) flush() { w.h.Write(w.buf); w.buf = w.buf[:0] }
