package conserve

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/dsp/fourier"
	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
)

// lattice is the translation structure of a planar periodic mesh: the cells are the
// translates by (i·dx, j·dy), 0 ≤ i < nx, 0 ≤ j < ny, of b representative cells (the
// sublattices). Bloch's theorem then splits every vector on the cells into nx·ny classes
// of wavenumber κ = 2π(p/Lx, q/Ly), each of dimension b.
//
// A mesh periodic in x only (a strip, like grids.NewLine) is allowed when it has a single
// row of lattice cells: ny = 1, dy = Ly and only ky = 0 is analysed.
type lattice struct {
	nx, ny, b int
	dx, dy    float64
	lx, ly    float64
	// cellAt[(j·nx + i)·b + σ] is the cell of sublattice σ at lattice position (i, j);
	// pos[c] = j·nx + i and sub[c] = σ invert it.
	cellAt   []int32
	pos, sub []int32
	// rep[σ] is the polygon of a sublattice-σ cell moved to lattice position (0, 0), and
	// meas[σ] the common measure of its cells.
	rep  [][]r3.Vec
	meas []float64
}

// findLattice detects the lattice of m, whose cells carry the measures ms (the inner
// product of the analysis; they must be translation invariant).
func findLattice(m *grids.Mesh, ms []float64) (*lattice, error) {
	if m.Surface != grids.Plane || !m.PeriodicX {
		return nil, fmt.Errorf("Fourier analysis needs a plane mesh periodic in x (and in y, or one cell row)")
	}
	n := m.NumCells()
	h := math.Sqrt(m.Lx * m.Ly / float64(n))
	tol := 1e-7 * h
	L := &lattice{lx: m.Lx, ly: m.Ly}
	L.nx = largestTranslation(m, n, tol, true)
	if m.PeriodicY {
		L.ny = largestTranslation(m, n, tol, false)
	} else {
		L.ny = 1
	}
	if L.nx*L.ny == 0 || n%(L.nx*L.ny) != 0 {
		return nil, fmt.Errorf("Fourier analysis: mesh %q has no usable translation lattice", m.Name)
	}
	L.b = n / (L.nx * L.ny)
	L.dx, L.dy = m.Lx/float64(L.nx), m.Ly/float64(L.ny)
	L.pos = make([]int32, n)
	L.sub = make([]int32, n)
	L.cellAt = make([]int32, n)
	for i := range L.cellAt {
		L.cellAt[i] = -1
	}
	type class struct{ ox, oy float64 }
	var classes []class
	for c := 0; c < n; c++ {
		g := m.CellCentroid[c]
		i, ox := latticeCoord(g.X, L.dx, L.nx, tol)
		j, oy := 0, g.Y
		if m.PeriodicY {
			j, oy = latticeCoord(g.Y, L.dy, L.ny, tol)
		}
		s := -1
		for k, cl := range classes {
			if math.Abs(cl.ox-ox) <= tol && math.Abs(cl.oy-oy) <= tol {
				s = k
				break
			}
		}
		if s < 0 {
			if len(classes) == L.b {
				return nil, fmt.Errorf("Fourier analysis: mesh %q: cell %d fits none of the %d sublattices", m.Name, c, L.b)
			}
			s = len(classes)
			classes = append(classes, class{ox, oy})
			var buf []r3.Vec
			for _, v := range m.CellVertices(c) {
				p := m.Unwrap(m.Verts[v], g)
				buf = append(buf, r3.Vec{X: p.X - float64(i)*L.dx, Y: p.Y - float64(j)*L.dy})
			}
			L.rep = append(L.rep, buf)
			L.meas = append(L.meas, ms[c])
		}
		if math.Abs(ms[c]-L.meas[s]) > 1e-9*L.meas[s] {
			return nil, fmt.Errorf("Fourier analysis: mesh %q: measure of cell %d (%g) differs from its translates (%g)", m.Name, c, ms[c], L.meas[s])
		}
		p := j*L.nx + i
		slot := p*L.b + s
		if L.cellAt[slot] >= 0 {
			return nil, fmt.Errorf("Fourier analysis: mesh %q: cells %d and %d occupy the same lattice slot", m.Name, L.cellAt[slot], c)
		}
		L.cellAt[slot] = int32(c)
		L.pos[c], L.sub[c] = int32(p), int32(s)
	}
	return L, nil
}

// latticeCoord splits x into a lattice index in [0, n) and an offset in [−tol, d − tol).
func latticeCoord(x, d float64, n int, tol float64) (int, float64) {
	i := int(math.Floor((x + tol) / d))
	o := x - float64(i)*d
	i = ((i % n) + n) % n
	return i, o
}

// largestTranslation returns the largest n dividing the cell count such that translating
// the mesh by L/n along x (or y) maps every cell centroid onto a centroid of a cell with
// the same area.
func largestTranslation(m *grids.Mesh, ncell int, tol float64, alongX bool) int {
	period := m.Lx
	if !alongX {
		period = m.Ly
	}
	// Hash centroids on a grid of spacing 4·tol; look up the 3×3 neighbourhood.
	q := 4 * tol
	key := func(p r3.Vec) [2]int64 {
		x, y := p.X, p.Y
		if x > m.Lx-q {
			x -= m.Lx
		}
		if m.PeriodicY && y > m.Ly-q {
			y -= m.Ly
		}
		return [2]int64{int64(math.Round(x / q)), int64(math.Round(y / q))}
	}
	index := make(map[[2]int64][]int32, ncell)
	for c := 0; c < ncell; c++ {
		k := key(m.CellCentroid[c])
		index[k] = append(index[k], int32(c))
	}
	var divs []int
	for d := 1; d <= ncell; d++ {
		if ncell%d == 0 && d >= 2 {
			divs = append(divs, d)
		}
	}
	sort.Sort(sort.Reverse(sort.IntSlice(divs)))
	for _, n := range divs {
		shift := period / float64(n)
		ok := true
		for c := 0; c < ncell && ok; c++ {
			p := m.CellCentroid[c]
			if alongX {
				p.X += shift
			} else {
				p.Y += shift
			}
			p = m.Wrap(p)
			k := key(p)
			found := false
			for dx := int64(-1); dx <= 1 && !found; dx++ {
				for dy := int64(-1); dy <= 1 && !found; dy++ {
					for _, o := range index[[2]int64{k[0] + dx, k[1] + dy}] {
						g := m.Unwrap(m.CellCentroid[o], p)
						if math.Abs(g.X-p.X) <= tol && math.Abs(g.Y-p.Y) <= tol &&
							math.Abs(m.CellArea[o]-m.CellArea[c]) <= 1e-9*m.CellArea[c] {
							found = true
							break
						}
					}
				}
			}
			ok = found
		}
		if ok {
			return n
		}
	}
	return 1
}

// blochTransform computes Y[σ][p'] = Σ_n y(n, σ)·e^{−iκ'·T_n} for every sublattice σ and
// Bloch class p' = q·nx + p (κ' = 2π(p/Lx, q/Ly)), from the cell vector y.
type blochFFT struct {
	L      *lattice
	fx, fy *fourier.CmplxFFT
	row    []complex128
	col    []complex128
}

func newBlochFFT(L *lattice) *blochFFT {
	return &blochFFT{L: L, fx: fourier.NewCmplxFFT(L.nx), fy: fourier.NewCmplxFFT(L.ny),
		row: make([]complex128, L.nx), col: make([]complex128, L.ny)}
}

// transform fills dst[σ·nx·ny + class] from the cell vector y (len N).
func (t *blochFFT) transform(dst []complex128, y []complex128) {
	L := t.L
	nc := L.nx * L.ny
	for s := 0; s < L.b; s++ {
		a := dst[s*nc : (s+1)*nc]
		for p := 0; p < nc; p++ {
			a[p] = y[L.cellAt[p*L.b+s]]
		}
		for j := 0; j < L.ny; j++ {
			r := a[j*L.nx : (j+1)*L.nx]
			copy(t.row, r)
			t.fx.Coefficients(r, t.row)
		}
		if L.ny > 1 {
			for i := 0; i < L.nx; i++ {
				for j := 0; j < L.ny; j++ {
					t.col[j] = a[j*L.nx+i]
				}
				t.fy.Coefficients(t.col, t.col)
				for j := 0; j < L.ny; j++ {
					a[j*L.nx+i] = t.col[j]
				}
			}
		}
	}
}

// phase returns e^{iκ·T_n} for class (p, q) and lattice position n = j·nx + i.
func (L *lattice) phase(p, q, n int) complex128 {
	i, j := n%L.nx, n/L.nx
	a := 2 * math.Pi * (float64(p*i%L.nx)/float64(L.nx) + float64(q*j%L.ny)/float64(L.ny))
	s, c := math.Sincos(a)
	return complex(c, s)
}
