package conserve

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"sort"

	"gonum.org/v1/gonum/mat"

	"github.com/colbridge/colbridge/weights"
)

// SymbolReport is the singular-value analysis of the restriction W on the dynamics cells
// of a periodic plane (check 6a, invisible modes). The singular values are those of W
// between the measure inner products, σ² the eigenvalues of W*W = M_s⁻¹WᵀM_tW, computed
// in the orthonormal Bloch basis, where W*W splits into blocks that couple only the Bloch
// classes W mixes (one class per block when W is translation invariant on the dynamics
// lattice, 4 when it is invariant under 2-cell shifts, ...). Because σ² is what is
// computed, singular values near zero are resolved to about 1e-8·σ_max (the square root
// of rounding), which is why the default threshold is 1e-6.
type SymbolReport struct {
	// Blocks is the number of coupled blocks and LargestBlock the largest size.
	Blocks       int `json:"blocks"`
	LargestBlock int `json:"largest_block"`
	// Threshold is the relative level (σ/σ_max) at or below which a singular value is
	// invisible; MaxSingularValue is σ_max; Smallest lists the smallest 16 values of
	// σ/σ_max in increasing order.
	Threshold        float64   `json:"threshold"`
	MaxSingularValue float64   `json:"max_singular_value"`
	Smallest         []float64 `json:"smallest"`
	// InvisibleDimension is the number of singular values at or below the threshold:
	// the dimension of the restriction's (numerical) null space.
	InvisibleDimension int `json:"invisible_dimension"`
	// InvisibleFourierModes counts the Fourier modes (cell means of e^{ik·x}) whose norm
	// lies mostly (more than half of its square) in that null space, and
	// SmoothestInvisibleWavelength is the longest wavelength among them in grid lengths
	// (0 when there is none). A value ≥ 8 means resolved scales the physics cannot see.
	InvisibleFourierModes        int     `json:"invisible_fourier_modes"`
	SmoothestInvisibleWavelength float64 `json:"smoothest_invisible_wavelength"`

	// values holds all σ/σ_max, ascending; pattern the worst mode on the cells.
	values  []float64
	pattern []float64
}

// SingularValues returns all relative singular values σ/σ_max in increasing order.
func (s *SymbolReport) SingularValues() []float64 { return s.values }

// WorstMode returns the cell pattern of the worst invisible mode: the projection onto
// the null space of the smoothest invisible Fourier mode, or, when no Fourier mode is
// mostly invisible, the singular vector of the smallest singular value.
func (s *SymbolReport) WorstMode() []float64 { return s.pattern }

// unionFind groups indices.
type unionFind []int32

func (u unionFind) find(i int32) int32 {
	for u[i] != i {
		u[i] = u[u[i]]
		i = u[i]
	}
	return i
}

func (u unionFind) union(a, b int32) {
	ra, rb := u.find(a), u.find(b)
	if ra != rb {
		u[max(ra, rb)] = min(ra, rb)
	}
}

type symEntry struct {
	row int32
	val complex128
}

// symbolAnalysis computes the singular values of W in the Bloch basis of fb's lattice.
func symbolAnalysis(fb *fourierBasis, fft *blochFFT, w, wAdj *weights.CSR, opt FourierOptions) (*SymbolReport, error) {
	L := fb.L
	n := len(L.pos)
	nc := L.nx * L.ny
	op := chain{wAdj, w}
	// Bloch basis index i = σ·nc + class; e_i(c) = δ_{σ,sub c}·e^{iκ·T_n}/√(nc·m_σ).
	basisVec := func(u []complex128, i int) {
		s, cls := i/nc, i%nc
		p, q := cls%L.nx, cls/L.nx
		for c := range u {
			u[c] = 0
		}
		scale := complex(1/math.Sqrt(float64(nc)*L.meas[s]), 0)
		for pos := 0; pos < nc; pos++ {
			c := L.cellAt[pos*L.b+s]
			u[c] = L.phase(p, q, pos) * scale
		}
	}
	lmax := powerEstimate(op, L, n)
	drop := 1e-12 * lmax
	cols := make([][]symEntry, n)
	uf := make(unionFind, n)
	for i := range uf {
		uf[i] = int32(i)
	}
	Y := make([]complex128, n)
	const batch = 16
	for start := 0; start < n; start += batch {
		nb := min(batch, n-start)
		us := make([][]complex128, nb)
		ys := make([][]complex128, nb)
		for v := range us {
			us[v] = make([]complex128, n)
			ys[v] = make([]complex128, n)
			basisVec(us[v], start+v)
		}
		op.applyComplex(ys, us)
		for v := 0; v < nb; v++ {
			col := start + v
			fft.transform(Y, ys[v])
			for i, y := range Y {
				s := i / nc
				g := y * complex(math.Sqrt(L.meas[s]/float64(nc)), 0)
				if cmplx.Abs(g) > drop {
					cols[col] = append(cols[col], symEntry{int32(i), g})
					uf.union(int32(i), int32(col))
				}
			}
			// A column coupling more components than a block may hold means the map is
			// not translation invariant on a coarse lattice; stop before storing O(N²).
			if len(cols[col]) > opt.maxBlock() {
				return nil, fmt.Errorf("symbol analysis: the restriction couples more than %d Bloch components (MaxBlock): it is not translation invariant on a coarse lattice", opt.maxBlock())
			}
		}
	}
	groups := map[int32][]int32{}
	var roots []int32
	for i := range uf {
		r := uf.find(int32(i))
		if _, ok := groups[r]; !ok {
			roots = append(roots, r)
		}
		groups[r] = append(groups[r], int32(i))
	}
	rep := &SymbolReport{Blocks: len(roots), Threshold: opt.tol()}
	for _, r := range roots {
		rep.LargestBlock = max(rep.LargestBlock, len(groups[r]))
	}
	if rep.LargestBlock > opt.maxBlock() {
		return nil, fmt.Errorf("symbol analysis: the restriction couples %d Bloch components (limit %d): it is not translation invariant on a coarse lattice", rep.LargestBlock, opt.maxBlock())
	}
	// Pass 1: eigenvalues of every block.
	type blockEig struct {
		idx  []int32
		vals []float64 // ascending, each once (the real embedding doubles them)
	}
	blocks := make([]blockEig, len(roots))
	smax2 := 0.0
	var all []float64
	for bi, r := range roots {
		idx := groups[r]
		vals, _ := blockEigen(idx, cols, false)
		blocks[bi] = blockEig{idx, vals}
		for _, v := range vals {
			smax2 = math.Max(smax2, v)
		}
	}
	if smax2 <= 0 {
		return nil, fmt.Errorf("symbol analysis: the restriction is zero")
	}
	smax := math.Sqrt(smax2)
	rep.MaxSingularValue = smax
	thr := rep.Threshold
	for _, b := range blocks {
		for _, v := range b.vals {
			all = append(all, math.Sqrt(math.Max(v, 0))/smax)
		}
	}
	sort.Float64s(all)
	rep.values = all
	rep.Smallest = append([]float64(nil), all[:min(16, len(all))]...)
	for _, v := range all {
		if v <= thr {
			rep.InvisibleDimension++
		}
	}
	// Pass 2: null spaces of the blocks that have invisible values.
	worstLam := -1.0
	var worstPattern, smallestPattern []float64
	smallest := math.Inf(1)
	for _, b := range blocks {
		if len(b.vals) == 0 || math.Sqrt(math.Max(b.vals[0], 0))/smax > thr {
			continue
		}
		vals2, vecs := blockEigen(b.idx, cols, true)
		nb := len(b.idx)
		pos := map[int32]int{}
		for k, i := range b.idx {
			pos[i] = k
		}
		var null [][]float64 // real embedded null vectors, length 2·nb
		for k, v := range vals2 {
			if math.Sqrt(math.Max(v, 0))/smax <= thr {
				col := make([]float64, 2*nb)
				for r := range col {
					col[r] = vecs.At(r, k)
				}
				null = append(null, col)
			}
		}
		if s := math.Sqrt(math.Max(vals2[0], 0)); s < smallest {
			smallest = s
			smallestPattern = blochToCells(fb, b.idx, embedToComplex(null[0]))
		}
		// The Fourier modes of the classes in this block.
		classes := map[int]bool{}
		for _, i := range b.idx {
			classes[int(i)%nc] = true
		}
		for cls := range classes {
			for j := 0; j < L.b; j++ {
				mode := cls*L.b + j
				// Coordinates of u_mode in the Bloch basis: √(nc·m_σ)·μ_σ(k).
				u := make([]float64, 2*nb)
				norm2 := 0.0
				for s := 0; s < L.b; s++ {
					k, ok := pos[int32(s*nc+cls)]
					if !ok {
						continue
					}
					z := complex(math.Sqrt(float64(nc)*L.meas[s]), 0) * fb.mu[mode][s]
					u[k], u[nb+k] = real(z), imag(z)
					norm2 += sq(cmplx.Abs(z))
				}
				proj := make([]float64, 2*nb)
				inNull := 0.0
				for _, r := range null {
					d := 0.0
					for t := range r {
						d += r[t] * u[t]
					}
					inNull += d * d
					for t := range r {
						proj[t] += d * r[t]
					}
				}
				if norm2 > 0 && inNull > 0.5*norm2 {
					rep.InvisibleFourierModes++
					lam := finiteOrZero(fb.wavelength(mode))
					if lam > worstLam {
						worstLam = lam
						worstPattern = blochToCells(fb, b.idx, embedToComplex(proj))
					}
				}
			}
		}
	}
	if worstLam >= 0 {
		rep.SmoothestInvisibleWavelength = worstLam
		rep.pattern = worstPattern
	} else {
		rep.pattern = smallestPattern
	}
	return rep, nil
}

// blockEigen returns the eigenvalues (ascending, one per complex eigenvalue) of the
// Hermitian block of W*W on the Bloch indices idx, and with vectors the eigenvectors of
// its real embedding [[Re, −Im], [Im, Re]] (2·len(idx) columns, ascending eigenvalues,
// including both copies).
func blockEigen(idx []int32, cols [][]symEntry, vectors bool) ([]float64, *mat.Dense) {
	nb := len(idx)
	pos := make(map[int32]int, nb)
	for k, i := range idx {
		pos[i] = k
	}
	g := make([]complex128, nb*nb)
	for k, c := range idx {
		for _, e := range cols[c] {
			if r, ok := pos[e.row]; ok {
				g[r*nb+k] = e.val
			}
		}
	}
	s := mat.NewSymDense(2*nb, nil)
	for r := 0; r < nb; r++ {
		for c := r; c < nb; c++ {
			h := (g[r*nb+c] + cmplx.Conj(g[c*nb+r])) / 2 // Hermitian part
			a, b := real(h), imag(h)
			s.SetSym(r, c, a)
			s.SetSym(nb+r, nb+c, a)
			s.SetSym(r, nb+c, -b)
			s.SetSym(c, nb+r, b)
		}
	}
	var es mat.EigenSym
	if !es.Factorize(s, vectors) {
		return nil, nil
	}
	raw := es.Values(nil)
	vals := make([]float64, 0, nb)
	for k := 0; k < len(raw); k += 2 {
		vals = append(vals, (raw[k]+raw[k+1])/2)
	}
	if !vectors {
		return vals, nil
	}
	var v mat.Dense
	es.VectorsTo(&v)
	return raw, &v
}

// embedToComplex turns a real embedded vector (re; im) into complex coordinates.
func embedToComplex(x []float64) []complex128 {
	n := len(x) / 2
	z := make([]complex128, n)
	for i := range z {
		z[i] = complex(x[i], x[n+i])
	}
	return z
}

// blochToCells maps coordinates z on the Bloch basis indices idx to a real cell pattern
// (the real part, or the imaginary part when that is larger), scaled to max |x| = 1.
func blochToCells(fb *fourierBasis, idx []int32, z []complex128) []float64 {
	L := fb.L
	n := len(L.pos)
	nc := L.nx * L.ny
	u := make([]complex128, n)
	for k, i := range idx {
		s, cls := int(i)/nc, int(i)%nc
		p, q := cls%L.nx, cls/L.nx
		scale := z[k] / complex(math.Sqrt(float64(nc)*L.meas[s]), 0)
		for pos := 0; pos < nc; pos++ {
			u[L.cellAt[pos*L.b+s]] += L.phase(p, q, pos) * scale
		}
	}
	var re, im float64
	for _, v := range u {
		re += real(v) * real(v)
		im += imag(v) * imag(v)
	}
	x := make([]float64, n)
	big := 0.0
	for c, v := range u {
		if re >= im {
			x[c] = real(v)
		} else {
			x[c] = imag(v)
		}
		big = math.Max(big, math.Abs(x[c]))
	}
	if big > 0 {
		for c := range x {
			x[c] /= big
		}
	}
	return x
}

// powerEstimate estimates the largest eigenvalue of the M-self-adjoint operator op by 30
// power iterations from a fixed random vector (a lower bound within a few per cent, used
// only to set the level below which symbol entries are rounding).
func powerEstimate(op chain, L *lattice, n int) float64 {
	rng := rand.New(rand.NewPCG(7, 11))
	x := make([]float64, n)
	for i := range x {
		x[i] = rng.Float64() - 0.5
	}
	y := make([]float64, n)
	lam := 0.0
	norm := func(v []float64) float64 {
		s := 0.0
		for c, a := range v {
			s += L.meas[L.sub[c]] * a * a
		}
		return math.Sqrt(s)
	}
	for range 30 {
		nx := norm(x)
		if nx == 0 {
			return 0
		}
		for i := range x {
			x[i] /= nx
		}
		op.apply(y, x)
		lam = norm(y)
		x, y = y, x
	}
	return lam
}
