package conserve

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// FourierOptions tunes the exact Fourier analysis on doubly periodic planes.
type FourierOptions struct {
	// MaxCells bounds the dynamics mesh analysed (0 means 4096 cells). The analysis
	// applies the round trip to all N modes, costing O(N·(nnz + N log N)).
	MaxCells int
	// Smooth and Grid are the wavelength limits, in grid lengths, of smooth inputs (0
	// means 8) and of grid-scale outputs (0 means 3), as in DESIGN.md §5.
	Smooth, Grid float64
	// SymbolTol: singular values of the restriction's symbol at or below
	// SymbolTol·(largest) count as invisible (0 means 1e-6).
	SymbolTol float64
	// MaxBlock bounds the size of a coupled block of Bloch classes in the symbol
	// analysis (0 means 256); larger blocks mean the restriction is not translation
	// invariant on any coarse lattice, and the symbol is skipped (see null_space).
	MaxBlock int
}

func (o FourierOptions) maxCells() int   { return defInt(o.MaxCells, 4096) }
func (o FourierOptions) smooth() float64 { return defFloat(o.Smooth, 8) }
func (o FourierOptions) grid() float64   { return defFloat(o.Grid, 3) }
func (o FourierOptions) tol() float64    { return defFloat(o.SymbolTol, 1e-6) }
func (o FourierOptions) maxBlock() int   { return defInt(o.MaxBlock, 256) }

func defInt(v, d int) int {
	if v > 0 {
		return v
	}
	return d
}

func defFloat(v, d float64) float64 {
	if v > 0 {
		return v
	}
	return d
}

// FourierReport is the exact Fourier analysis of the dynamics round trip R on a doubly
// periodic planar mesh (check 6a). Wavelengths are in grid lengths: a mode of
// wavenumber k has wavelength 2π/|(kx·dx, ky·dy)|, (dx, dy) the lattice spacing.
type FourierReport struct {
	// Lattice: NX × NY translates of CellsPerLatticeCell cells of size DX × DY.
	NX                  int     `json:"nx"`
	NY                  int     `json:"ny"`
	CellsPerLatticeCell int     `json:"cells_per_lattice_cell"`
	DX                  float64 `json:"dx"`
	DY                  float64 `json:"dy"`
	Modes               int     `json:"modes"`
	// SmoothWavelength and GridWavelength are the limits used (8 and 3 by default).
	SmoothWavelength float64 `json:"smooth_wavelength"`
	GridWavelength   float64 `json:"grid_wavelength"`
	// The response is |c|, c the coefficient of the input mode in the output: the
	// amplitude kept. ConstantResponse is that of k = 0; Response2DX that of the 2Δx wave
	// (kx·dx = π, ky = 0; null when nx is odd); CheckerboardResponse that of
	// (kx·dx, ky·dy) = (π, π) (null when nx or ny is odd or y is not periodic).
	ConstantResponse     float64  `json:"constant_response"`
	Response2DX          *float64 `json:"response_2dx"`
	CheckerboardResponse *float64 `json:"checkerboard_response"`
	// SmoothMinResponse is the smallest response over smooth modes (k ≠ 0): the worst
	// damping of resolved scales. GridMaxResponse is the largest over grid-scale modes.
	SmoothMinResponse float64 `json:"smooth_min_response"`
	GridMaxResponse   float64 `json:"grid_max_response"`
	// NoiseMax is the largest share of the output's norm (in the source measure) that
	// lies in grid-scale modes, over smooth inputs; NoiseMaxWavelength is the input's
	// wavelength (0 for the constant); NoiseMean the mean over smooth inputs.
	NoiseMax           float64 `json:"noise_max"`
	NoiseMaxWavelength float64 `json:"noise_max_wavelength"`
	NoiseMean          float64 `json:"noise_mean"`
	// Damping is the response binned by wavelength (bins a factor √2 wide from 1).
	Damping []DampingBin `json:"damping"`
	// Symbol is the singular-value analysis of the restriction (nil when skipped).
	Symbol *SymbolReport `json:"symbol"`

	// Per-mode data for the plots.
	modes    []ModeResponse
	spectrum []ModeResponse // output wavelength, max amplitude from smooth inputs
	transfer [][]complex128 // transfer[in][out], kept up to MaxTransfer modes
}

// MaxTransfer is the largest number of modes for which FourierAnalysis keeps the full
// transfer matrix (N² complex numbers: 16 MB at 1024 modes).
const MaxTransfer = 1024

// Transfer returns the full transfer matrix of the round trip in Fourier space:
// Transfer()[in][out] is the coefficient of output mode out when the input is mode in
// (with amplitude 1), modes indexed as in ModeResponses. It is nil above MaxTransfer
// modes.
func (f *FourierReport) Transfer() [][]complex128 { return f.transfer }

// ModeResponse is one Fourier mode: its wavenumber, wavelength in grid lengths (+Inf for
// k = 0) and a response or amplitude.
type ModeResponse struct {
	KX, KY, Wavelength, Value float64
}

// ModeResponses returns the per-mode responses (amplitude kept per input mode), in mode
// order: Bloch class q·nx + p, then the representatives of the class by increasing |k|.
func (f *FourierReport) ModeResponses() []ModeResponse { return f.modes }

// Spectrum returns, per output mode, the largest amplitude that any smooth input (other
// than the mode itself) puts into it: the noise spectrum.
func (f *FourierReport) Spectrum() []ModeResponse { return f.spectrum }

// DampingBin summarises the response of the modes whose wavelength lies in
// [WavelengthMin, WavelengthMax).
type DampingBin struct {
	WavelengthMin float64 `json:"wavelength_min"`
	WavelengthMax float64 `json:"wavelength_max"`
	Modes         int     `json:"modes"`
	ResponseMin   float64 `json:"response_min"`
	ResponseMean  float64 `json:"response_mean"`
	ResponseMax   float64 `json:"response_max"`
}

// fourierBasis is the set of N Fourier modes of the cells: per Bloch class κ = (p, q) the
// b wavenumbers k = κ + G of smallest grid-normalised length whose cell means are
// linearly independent on the b sublattices. Mode index = class·b + j.
type fourierBasis struct {
	L      *lattice
	kx, ky []float64
	theta  []float64      // |(kx·dx, ky·dy)|
	mu     [][]complex128 // mu[mode][σ]: mean of e^{ik·x} over rep[σ]
	invB   [][]complex128 // per class: inverse of B[σ][j] = mu[class·b+j][σ], row-major b×b
	norm2  []float64      // ‖u_mode‖²_M
}

func (fb *fourierBasis) wavelength(mode int) float64 {
	if fb.theta[mode] == 0 {
		return math.Inf(1)
	}
	return 2 * math.Pi / fb.theta[mode]
}

func newFourierBasis(L *lattice, periodicY bool) (*fourierBasis, error) {
	nc := L.nx * L.ny
	n := nc * L.b
	fb := &fourierBasis{L: L, kx: make([]float64, n), ky: make([]float64, n), theta: make([]float64, n),
		mu: make([][]complex128, n), invB: make([][]complex128, nc), norm2: make([]float64, n)}
	A := 1 + int(math.Ceil(math.Sqrt(float64(L.b))))
	centre := func(p, n int) int {
		if 2*p < n {
			return p
		}
		return p - n
	}
	type cand struct {
		a, c   int
		kx, ky float64
		theta  float64
	}
	for q := 0; q < L.ny; q++ {
		for p := 0; p < L.nx; p++ {
			cls := q*L.nx + p
			p0, q0 := centre(p, L.nx), centre(q, L.ny)
			var cs []cand
			for a := -A; a <= A; a++ {
				for c := -A; c <= A; c++ {
					if !periodicY && (c != 0 || q0 != 0) {
						continue
					}
					kx := 2 * math.Pi * float64(p0+a*L.nx) / L.lx
					ky := 2 * math.Pi * float64(q0+c*L.ny) / L.ly
					if !periodicY {
						ky = 0
					}
					cs = append(cs, cand{a, c, kx, ky, math.Hypot(kx*L.dx, ky*L.dy)})
				}
			}
			sort.SliceStable(cs, func(i, j int) bool {
				if cs[i].theta != cs[j].theta {
					return cs[i].theta < cs[j].theta
				}
				if ai, aj := abs(cs[i].a)+abs(cs[i].c), abs(cs[j].a)+abs(cs[j].c); ai != aj {
					return ai < aj
				}
				if cs[i].a != cs[j].a {
					return cs[i].a < cs[j].a
				}
				return cs[i].c < cs[j].c
			})
			// Greedy choice of b independent columns (Gram–Schmidt in the measure).
			var basis [][]complex128
			j := 0
			for _, c := range cs {
				if j == L.b {
					break
				}
				mu := make([]complex128, L.b)
				for s := range mu {
					mu[s] = PolygonExpMean(c.kx, c.ky, L.rep[s])
				}
				r := append([]complex128(nil), mu...)
				for _, e := range basis {
					var d complex128
					for s := range r {
						d += cmplx.Conj(e[s]) * r[s] * complex(L.meas[s], 0)
					}
					for s := range r {
						r[s] -= d * e[s]
					}
				}
				nr, nm := 0.0, 0.0
				for s := range r {
					nr += L.meas[s] * sq(cmplx.Abs(r[s]))
					nm += L.meas[s] * sq(cmplx.Abs(mu[s]))
				}
				if nr <= 1e-6*nm || nm == 0 {
					continue
				}
				for s := range r {
					r[s] /= complex(math.Sqrt(nr), 0)
				}
				basis = append(basis, r)
				m := cls*L.b + j
				fb.kx[m], fb.ky[m], fb.theta[m], fb.mu[m] = c.kx, c.ky, c.theta, mu
				fb.norm2[m] = float64(nc) * nm
				j++
			}
			if j < L.b {
				return nil, fmt.Errorf("Fourier analysis: no independent set of %d modes for class (%d, %d)", L.b, p, q)
			}
			B := make([]complex128, L.b*L.b)
			for s := 0; s < L.b; s++ {
				for jj := 0; jj < L.b; jj++ {
					B[s*L.b+jj] = fb.mu[cls*L.b+jj][s]
				}
			}
			inv, ok := invertComplex(B, L.b)
			if !ok {
				return nil, fmt.Errorf("Fourier analysis: singular mode matrix for class (%d, %d)", p, q)
			}
			fb.invB[cls] = inv
		}
	}
	return fb, nil
}

func abs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}

func sq(x float64) float64 { return x * x }

// invertComplex returns the inverse of the n×n row-major matrix a by Gauss–Jordan
// elimination with partial pivoting.
func invertComplex(a []complex128, n int) ([]complex128, bool) {
	m := append([]complex128(nil), a...)
	inv := make([]complex128, n*n)
	for i := 0; i < n; i++ {
		inv[i*n+i] = 1
	}
	for col := 0; col < n; col++ {
		piv := col
		for r := col + 1; r < n; r++ {
			if cmplx.Abs(m[r*n+col]) > cmplx.Abs(m[piv*n+col]) {
				piv = r
			}
		}
		if m[piv*n+col] == 0 {
			return nil, false
		}
		for k := 0; k < n; k++ {
			m[col*n+k], m[piv*n+k] = m[piv*n+k], m[col*n+k]
			inv[col*n+k], inv[piv*n+k] = inv[piv*n+k], inv[col*n+k]
		}
		d := m[col*n+col]
		for k := 0; k < n; k++ {
			m[col*n+k] /= d
			inv[col*n+k] /= d
		}
		for r := 0; r < n; r++ {
			if r == col || m[r*n+col] == 0 {
				continue
			}
			f := m[r*n+col]
			for k := 0; k < n; k++ {
				m[r*n+k] -= f * m[col*n+k]
				inv[r*n+k] -= f * inv[col*n+k]
			}
		}
	}
	return inv, true
}

// modeVector fills u with the cell means of mode m: u(c) = e^{iκ·T_n(c)}·μ_σ(c)(k).
func (fb *fourierBasis) modeVector(u []complex128, m int) {
	L := fb.L
	cls := m / L.b
	p, q := cls%L.nx, cls/L.nx
	for c := range u {
		u[c] = L.phase(p, q, int(L.pos[c])) * fb.mu[m][L.sub[c]]
	}
}

// coefficients decomposes a Bloch transform Y (from blochFFT.transform) into mode
// coefficients: coef[mode].
func (fb *fourierBasis) coefficients(coef, Y []complex128) {
	L := fb.L
	nc := L.nx * L.ny
	b := L.b
	y := make([]complex128, b)
	for cls := 0; cls < nc; cls++ {
		for s := 0; s < b; s++ {
			y[s] = Y[s*nc+cls] / complex(float64(nc), 0)
		}
		inv := fb.invB[cls]
		for j := 0; j < b; j++ {
			var c complex128
			for s := 0; s < b; s++ {
				c += inv[j*b+s] * y[s]
			}
			coef[cls*b+j] = c
		}
	}
}

// FourierAnalysis applies the round trip r (a product of sparse matrices, applied right
// to left, square on the cells of mesh m) to every Fourier mode of m's cells and reports
// response, noise and the noise spectrum. ms are the cell measures (the inner product).
// w and wAdj, when not nil, are the restriction and its adjoint for the symbol analysis.
func FourierAnalysis(m *grids.Mesh, ms []float64, r []*weights.CSR, w, wAdj *weights.CSR, opt FourierOptions) (*FourierReport, error) {
	n := m.NumCells()
	if n > opt.maxCells() {
		return nil, fmt.Errorf("Fourier analysis: %d cells exceed the limit %d (FourierOptions.MaxCells)", n, opt.maxCells())
	}
	if len(ms) != n {
		panic("conserve: FourierAnalysis: measure length does not match the mesh")
	}
	op := chain(r)
	if rr, cc := op.dims(); rr != n || cc != n {
		panic(fmt.Sprintf("conserve: FourierAnalysis: round trip is %d × %d on a mesh of %d cells", rr, cc, n))
	}
	L, err := findLattice(m, ms)
	if err != nil {
		return nil, err
	}
	fb, err := newFourierBasis(L, m.PeriodicY)
	if err != nil {
		return nil, err
	}
	smoothL, gridL := opt.smooth(), opt.grid()
	rep := &FourierReport{NX: L.nx, NY: L.ny, CellsPerLatticeCell: L.b, DX: L.dx, DY: L.dy, Modes: n,
		SmoothWavelength: smoothL, GridWavelength: gridL, SmoothMinResponse: math.Inf(1)}
	nc := L.nx * L.ny
	response := make([]float64, n)
	specMax := make([]float64, n)
	isGrid := make([]bool, n)
	for k := range isGrid {
		isGrid[k] = fb.wavelength(k) <= gridL
	}
	fft := newBlochFFT(L)
	Y := make([]complex128, n)
	coef := make([]complex128, n)
	z := make([]complex128, L.b)
	const batch = 16
	var noiseSum float64
	var noiseCount int
	for start := 0; start < n; start += batch {
		nb := min(batch, n-start)
		us := make([][]complex128, nb)
		ys := make([][]complex128, nb)
		for v := range us {
			us[v] = make([]complex128, n)
			ys[v] = make([]complex128, n)
			fb.modeVector(us[v], start+v)
		}
		op.applyComplex(ys, us)
		for v := 0; v < nb; v++ {
			mode := start + v
			y := ys[v]
			fft.transform(Y, y)
			fb.coefficients(coef, Y)
			response[mode] = cmplx.Abs(coef[mode])
			if n <= MaxTransfer {
				if rep.transfer == nil {
					rep.transfer = make([][]complex128, n)
				}
				rep.transfer[mode] = append([]complex128(nil), coef...)
			}
			if fb.wavelength(mode) < smoothL {
				continue
			}
			var total, gridPart float64
			for c, yc := range y {
				total += L.meas[L.sub[c]] * sq(cmplx.Abs(yc))
			}
			for cls := 0; cls < nc; cls++ {
				hasGrid := false
				for s := range z {
					z[s] = 0
				}
				for j := 0; j < L.b; j++ {
					k := cls*L.b + j
					if !isGrid[k] {
						continue
					}
					hasGrid = true
					for s := range z {
						z[s] += coef[k] * fb.mu[k][s]
					}
				}
				if hasGrid {
					for s := range z {
						gridPart += float64(nc) * L.meas[s] * sq(cmplx.Abs(z[s]))
					}
				}
			}
			share := 0.0
			if total > 0 {
				share = math.Sqrt(math.Min(gridPart/total, 1))
			}
			noiseSum += share
			noiseCount++
			if share > rep.NoiseMax {
				rep.NoiseMax = share
				rep.NoiseMaxWavelength = finiteOrZero(fb.wavelength(mode))
			}
			for k := range coef {
				if k != mode {
					specMax[k] = math.Max(specMax[k], cmplx.Abs(coef[k]))
				}
			}
		}
	}
	if noiseCount > 0 {
		rep.NoiseMean = noiseSum / float64(noiseCount)
	}
	for k := 0; k < n; k++ {
		lam := fb.wavelength(k)
		rep.modes = append(rep.modes, ModeResponse{fb.kx[k], fb.ky[k], lam, response[k]})
		rep.spectrum = append(rep.spectrum, ModeResponse{fb.kx[k], fb.ky[k], lam, specMax[k]})
		switch {
		case fb.theta[k] == 0:
			rep.ConstantResponse = response[k]
		case lam >= smoothL:
			rep.SmoothMinResponse = math.Min(rep.SmoothMinResponse, response[k])
		case lam <= gridL:
			rep.GridMaxResponse = math.Max(rep.GridMaxResponse, response[k])
		}
	}
	if math.IsInf(rep.SmoothMinResponse, 1) {
		rep.SmoothMinResponse = 0
	}
	if L.nx%2 == 0 {
		v := response[(L.nx/2)*L.b]
		rep.Response2DX = &v
	}
	if L.nx%2 == 0 && L.ny%2 == 0 && m.PeriodicY {
		v := response[((L.ny/2)*L.nx+L.nx/2)*L.b]
		rep.CheckerboardResponse = &v
	}
	rep.Damping = dampingBins(rep.modes)
	if w != nil && wAdj != nil {
		sym, err := symbolAnalysis(fb, fft, w, wAdj, opt)
		if err != nil {
			return rep, err
		}
		rep.Symbol = sym
	}
	return rep, nil
}

func finiteOrZero(x float64) float64 {
	if math.IsInf(x, 0) || math.IsNaN(x) {
		return 0
	}
	return x
}

// dampingBins groups the finite-wavelength modes into bins [√2^i, √2^(i+1)).
func dampingBins(modes []ModeResponse) []DampingBin {
	bins := map[int]*DampingBin{}
	var keys []int
	for _, m := range modes {
		if math.IsInf(m.Wavelength, 0) {
			continue
		}
		i := int(math.Floor(2*math.Log2(m.Wavelength) + 1e-9))
		b, ok := bins[i]
		if !ok {
			b = &DampingBin{WavelengthMin: math.Pow(2, float64(i)/2), WavelengthMax: math.Pow(2, float64(i+1)/2),
				ResponseMin: math.Inf(1), ResponseMax: math.Inf(-1)}
			bins[i] = b
			keys = append(keys, i)
		}
		b.Modes++
		b.ResponseMin = math.Min(b.ResponseMin, m.Value)
		b.ResponseMax = math.Max(b.ResponseMax, m.Value)
		b.ResponseMean += m.Value
	}
	sort.Ints(keys)
	out := make([]DampingBin, 0, len(keys))
	for _, k := range keys {
		b := bins[k]
		b.ResponseMean /= float64(b.Modes)
		out = append(out, *b)
	}
	return out
}
