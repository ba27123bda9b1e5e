package conserve

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"gonum.org/v1/gonum/mat"

	"github.com/colbridge/colbridge/weights"
)

// NullSpaceOptions tunes the null-space analysis of the restriction (check 6c).
type NullSpaceOptions struct {
	// DenseMax: up to this many sources the analysis is a dense SVD (0 means 1024; the
	// SVD of a 1024-column matrix takes about 1.1 s on this project's 2-core machine)
	// when there are also at most 4·DenseMax targets; otherwise Lanczos.
	DenseMax int
	// Tol: singular values σ ≤ Tol·σ_max count as null (0 means 1e-6). Lanczos resolves
	// σ² to about 1e-16·σ_max², so Tol should stay above 1e-7 on large meshes.
	Tol float64
	// Steps is the Krylov dimension of one Lanczos run (0 means min(n, 150, 3e7/n) but
	// at least 20, so the basis stays near 240 MB), MaxModes the number of null vectors
	// Lanczos looks for before it stops (0 means 8).
	Steps, MaxModes int
	// Adjacency, when not nil, lists the neighbours of each source degree of freedom;
	// within a null space of dimension > 1 the worst mode is then the smoothest one (least
	// Σ over neighbour pairs of the squared difference, for unit norm). Audit fills it
	// from the source mesh's cell adjacency.
	Adjacency [][]int32
}

func (o NullSpaceOptions) denseMax() int { return defInt(o.DenseMax, 1024) }
func (o NullSpaceOptions) tol() float64  { return defFloat(o.Tol, 1e-6) }
func (o NullSpaceOptions) maxModes() int { return defInt(o.MaxModes, 8) }

// NullSpaceReport is the null space of the restriction W (check 6c): the source vectors W
// cannot see. Singular values are those of M_t^{1/2} W M_s^{−1/2}, i.e. of W between the
// measure inner products (unit measures when a side has none).
type NullSpaceReport struct {
	// Method is "dense-svd" or "lanczos".
	Method    string  `json:"method"`
	Threshold float64 `json:"threshold"`
	// Dimension is the number of singular values ≤ Threshold·MaxSingularValue, counting
	// the max(0, sources − targets) that a wide matrix must have. Exact is true for the
	// dense SVD; for Lanczos the count is a lower bound (Capped: the search stopped at
	// MaxModes).
	Dimension int  `json:"dimension"`
	Exact     bool `json:"exact"`
	Capped    bool `json:"capped"`
	// MaxSingularValue is σ_max; Smallest lists the smallest relative singular values
	// σ/σ_max found (up to 16, increasing); for Lanczos, the converged ones.
	MaxSingularValue float64   `json:"max_singular_value"`
	Smallest         []float64 `json:"smallest"`
	// WorstModeSingularValue is σ/σ_max of the worst mode, WorstModeRoughness its
	// neighbour-difference energy Σ_pairs (x_a − x_b)² / Σ x² (NaN-free: 0 without
	// adjacency), WorstModeMaxAt the index of its largest |entry|.
	WorstModeSingularValue float64 `json:"worst_mode_singular_value"`
	WorstModeRoughness     float64 `json:"worst_mode_roughness"`
	WorstModeMaxAt         int     `json:"worst_mode_max_at"`
	// Steps and Restarts describe the Lanczos runs (0 for dense).
	Steps    int `json:"steps"`
	Restarts int `json:"restarts"`

	mode []float64
}

// WorstMode returns the worst null mode on the sources, scaled to max |x| = 1 with a
// positive largest entry (the first, among equal magnitudes): the
// smoothest null vector when adjacency is known and the null space has dimension > 1,
// else the singular vector of the smallest singular value.
func (r *NullSpaceReport) WorstMode() []float64 { return r.mode }

// NullSpace analyses the null space of w with source measures ms and target measures mt
// (nil: ones).
func NullSpace(w *weights.CSR, ms, mt []float64, opt NullSpaceOptions) (*NullSpaceReport, error) {
	if w.Cols == 0 {
		return nil, fmt.Errorf("null space: the restriction has no sources")
	}
	sqs := make([]float64, w.Cols) // m_s^{-1/2}
	for j := range sqs {
		sqs[j] = 1
		if ms != nil {
			if !(ms[j] > 0) {
				return nil, fmt.Errorf("null space: source %d has measure %g", j, ms[j])
			}
			sqs[j] = 1 / math.Sqrt(ms[j])
		}
	}
	sqt := make([]float64, w.Rows) // m_t^{1/2}
	for i := range sqt {
		sqt[i] = 1
		if mt != nil {
			sqt[i] = math.Sqrt(math.Max(mt[i], 0))
		}
	}
	// The dense path holds a max(rows, cols) × cols matrix: also bound the rows.
	if w.Cols <= opt.denseMax() && w.Rows <= 4*opt.denseMax() {
		return denseNullSpace(w, sqs, sqt, opt)
	}
	return lanczosNullSpace(w, sqs, sqt, opt)
}

func denseNullSpace(w *weights.CSR, sqs, sqt []float64, opt NullSpaceOptions) (*NullSpaceReport, error) {
	nr, nc := w.Rows, w.Cols
	// A = M_t^{1/2} W M_s^{-1/2}; pad to at least nc rows so the SVD returns nc values.
	rows := max(nr, nc)
	a := mat.NewDense(rows, nc, nil)
	for i := 0; i < nr; i++ {
		for k := w.RowStart[i]; k < w.RowStart[i+1]; k++ {
			j := int(w.ColIndex[k])
			a.Set(i, j, sqt[i]*w.Values[k]*sqs[j])
		}
	}
	var svd mat.SVD
	if !svd.Factorize(a, mat.SVDThinV) {
		return nil, fmt.Errorf("null space: SVD did not converge")
	}
	sv := svd.Values(nil) // descending, length nc
	var v mat.Dense
	svd.VTo(&v)
	rep := &NullSpaceReport{Method: "dense-svd", Threshold: opt.tol(), Exact: true, WorstModeMaxAt: -1}
	smax := sv[0]
	rep.MaxSingularValue = smax
	if smax == 0 {
		rep.Dimension = nc
		return rep, nil
	}
	var nullCols []int
	for k := nc - 1; k >= 0; k-- {
		rel := sv[k] / smax
		if len(rep.Smallest) < 16 {
			rep.Smallest = append(rep.Smallest, rel)
		}
		if rel <= rep.Threshold {
			nullCols = append(nullCols, k)
		}
	}
	rep.Dimension = len(nullCols)
	if rep.Dimension == 0 {
		return rep, nil
	}
	basis := make([][]float64, len(nullCols)) // orthonormal in R^nc (weighted coordinates)
	for i, k := range nullCols {
		basis[i] = make([]float64, nc)
		for j := range basis[i] {
			basis[i][j] = v.At(j, k)
		}
	}
	svs := make([]float64, len(nullCols))
	for i, k := range nullCols {
		svs[i] = sv[k] / smax
	}
	rep.setWorst(basis, svs, sqs, opt.Adjacency)
	return rep, nil
}

// setWorst picks the worst mode in the span of the orthonormal (weighted) basis, whose
// relative singular values are svs (ascending): the smoothest when adjacency is known,
// else basis[0].
func (r *NullSpaceReport) setWorst(basis [][]float64, svs []float64, sqs []float64, adj [][]int32) {
	toSources := func(y []float64) []float64 {
		x := make([]float64, len(y))
		for j := range x {
			x[j] = y[j] * sqs[j]
		}
		return x
	}
	x := toSources(basis[0])
	r.WorstModeSingularValue = svs[0]
	if adj != nil && len(basis) > 1 {
		// Minimise xᵀLx over unit weighted vectors in the span: the smallest eigenvector
		// of ZᵀSᵀLSZ, S = M_s^{-1/2}. Its singular value is at most the largest in the span.
		d := len(basis)
		xs := make([][]float64, d)
		for i := range basis {
			xs[i] = toSources(basis[i])
		}
		// Minimise cᵀGc, G = Xᵀ(LX), (Lx)_a = Σ_{b~a} (x_a − x_b), so that
		// xᵀLy = Σ_pairs (x_a−x_b)(y_a−y_b): dense for small spans, Lanczos (60 steps,
		// an approximate minimiser, good enough to show a smooth representative) above.
		n := len(sqs)
		lap := func(dst, x []float64) {
			for a, nb := range adj {
				l := 0.0
				for _, b := range nb {
					l += x[a] - x[b]
				}
				dst[a] = l
			}
		}
		var c []float64
		if d <= 128 {
			lx := make([][]float64, d)
			for i := range lx {
				lx[i] = make([]float64, n)
				lap(lx[i], xs[i])
			}
			g := mat.NewSymDense(d, nil)
			for i := 0; i < d; i++ {
				for k := i; k < d; k++ {
					g.SetSym(i, k, (dot(xs[i], lx[k])+dot(xs[k], lx[i]))/2)
				}
			}
			var es mat.EigenSym
			if es.Factorize(g, true) {
				var ev mat.Dense
				es.VectorsTo(&ev)
				c = mat.Col(nil, 0, &ev)
			}
		} else {
			x := make([]float64, n)
			lx := make([]float64, n)
			op := func(dst, src []float64) {
				clear(x)
				for i := 0; i < d; i++ {
					for j := range x {
						x[j] += src[i] * xs[i][j]
					}
				}
				lap(lx, x)
				for i := 0; i < d; i++ {
					dst[i] = dot(xs[i], lx)
				}
			}
			rng := rand.New(rand.NewPCG(3, 3))
			theta, ritz, _ := lanczosRun(op, d, min(d, 60), nil, rng)
			if len(theta) > 0 {
				c = ritz(0)
			}
		}
		if c != nil {
			x = make([]float64, n)
			for i := 0; i < d; i++ {
				for j := range x {
					x[j] += c[i] * xs[i][j]
				}
			}
			r.WorstModeSingularValue = svs[d-1]
		}
	}
	big, at := 0.0, -1
	for j, v := range x {
		if math.Abs(v) > big {
			big, at = math.Abs(v), j
		}
	}
	if big > 0 {
		// Scale to max |x| = 1 with a positive peak, so the sign is reproducible.
		if x[at] < 0 {
			big = -big
		}
		for j := range x {
			x[j] /= big
		}
	}
	if adj != nil {
		if n2 := dot(x, x); n2 > 0 {
			r.WorstModeRoughness = roughnessForm(x, x, adj) / n2
		}
	}
	r.WorstModeMaxAt = at
	r.mode = x
}

// roughnessForm returns Σ over neighbour pairs {a, b} (each once) of (x_a − x_b)(y_a − y_b).
func roughnessForm(x, y []float64, adj [][]int32) float64 {
	s := 0.0
	for a, nb := range adj {
		for _, b := range nb {
			if int(b) > a {
				s += (x[a] - x[b]) * (y[a] - y[b])
			}
		}
	}
	return s
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// lanczosNullSpace finds null vectors of A = S Wᵀ T² W S (S = M_s^{-1/2}, T = M_t^{1/2})
// by Lanczos runs with full reorthogonalisation, locking each converged null vector and
// restarting orthogonal to the locked ones.
func lanczosNullSpace(w *weights.CSR, sqs, sqt []float64, opt NullSpaceOptions) (*NullSpaceReport, error) {
	n := w.Cols
	steps := opt.Steps
	if steps <= 0 {
		// The Krylov basis holds steps vectors of n values: keep it near 240 MB.
		steps = min(n, 150, max(20, 30_000_000/n))
	}
	steps = min(steps, n)
	tmp := make([]float64, w.Rows)
	x2 := make([]float64, n)
	wt := w.T()
	apply := func(dst, src []float64) {
		for j := range x2 {
			x2[j] = src[j] * sqs[j]
		}
		w.ApplyTo(tmp, x2)
		for i := range tmp {
			tmp[i] *= sqt[i] * sqt[i]
		}
		wt.ApplyTo(dst, tmp)
		for j := range dst {
			dst[j] *= sqs[j]
		}
	}
	rep := &NullSpaceReport{Method: "lanczos", Threshold: opt.tol(), Steps: steps, WorstModeMaxAt: -1}
	rng := rand.New(rand.NewPCG(0x6e756c6c, 5))
	var locked [][]float64
	var lockedVals []float64
	var conv []float64
	thetaMax := 0.0
	for {
		theta, ritz, resid := lanczosRun(apply, n, steps, locked, rng)
		rep.Restarts++
		for _, t := range theta {
			thetaMax = math.Max(thetaMax, t)
		}
		found := 0
		ay := make([]float64, n)
		for k, t := range theta {
			if resid[k] > 1e-8*thetaMax {
				continue
			}
			conv = append(conv, math.Sqrt(math.Max(t, 0)))
			if t <= sq(rep.Threshold)*thetaMax && len(locked) < opt.maxModes() {
				// Verify against the operator itself: near an exhausted Krylov space
				// the tridiagonal residual can miss ghosts of locked vectors.
				y := ritz(k)
				apply(ay, y)
				res := 0.0
				for i := range ay {
					res += sq(ay[i] - t*y[i])
				}
				ghost := false
				for _, l := range locked {
					ghost = ghost || math.Abs(dot(l, y)) > 1e-6
				}
				if math.Sqrt(res) > 1e-8*thetaMax || ghost {
					conv = conv[:len(conv)-1]
					continue
				}
				locked = append(locked, y)
				lockedVals = append(lockedVals, math.Sqrt(math.Max(t, 0)))
				found++
			}
		}
		if found == 0 {
			break
		}
		if len(locked) >= opt.maxModes() {
			rep.Capped = true
			break
		}
	}
	smax := math.Sqrt(thetaMax)
	rep.MaxSingularValue = smax
	if smax > 0 {
		sort.Float64s(conv)
		for _, c := range conv {
			if len(rep.Smallest) == 16 {
				break
			}
			rep.Smallest = append(rep.Smallest, c/smax)
		}
	}
	rep.Dimension = max(len(locked), w.Cols-w.Rows)
	if len(locked) > 0 {
		// Order by singular value so basis[0] is the smallest.
		idx := make([]int, len(locked))
		for i := range idx {
			idx[i] = i
		}
		sort.Slice(idx, func(a, b int) bool { return lockedVals[idx[a]] < lockedVals[idx[b]] })
		basis := make([][]float64, len(idx))
		svs := make([]float64, len(idx))
		for i, k := range idx {
			basis[i] = locked[k]
			svs[i] = lockedVals[k] / math.Max(smax, 1e-300)
		}
		rep.setWorst(basis, svs, sqs, opt.Adjacency)
	}
	return rep, nil
}

// lanczosRun runs `steps` Lanczos steps on the symmetric operator apply from a random
// start orthogonal to locked, reorthogonalising every new vector against all previous
// ones and the locked ones (twice, classical Gram–Schmidt), and returns the Ritz values
// (ascending), a function building Ritz vector k (unit length; O(m·n)) and the residual
// norms |β_m·s_mk|. The tridiagonal eigenproblem is solved by gonum's mat.EigenSym.
func lanczosRun(apply func(dst, src []float64), n, steps int, locked [][]float64, rng *rand.Rand) ([]float64, func(k int) []float64, []float64) {
	q := make([][]float64, 0, steps)
	alpha := make([]float64, 0, steps)
	beta := make([]float64, 0, steps)
	v := make([]float64, n)
	for i := range v {
		v[i] = rng.NormFloat64()
	}
	orth := func(x []float64, against [][]float64) {
		for pass := 0; pass < 2; pass++ {
			for _, b := range against {
				d := dot(b, x)
				for i := range x {
					x[i] -= d * b[i]
				}
			}
		}
	}
	orth(v, locked)
	nv := math.Sqrt(dot(v, v))
	if nv == 0 {
		return nil, nil, nil
	}
	for i := range v {
		v[i] /= nv
	}
	wv := make([]float64, n)
	// The Krylov space lives in the complement of the locked vectors.
	steps = min(steps, n-len(locked))
	for j := 0; j < steps; j++ {
		q = append(q, v)
		apply(wv, v)
		nw := math.Sqrt(dot(wv, wv))
		a := dot(v, wv)
		alpha = append(alpha, a)
		orth(wv, locked)
		orth(wv, q)
		b := math.Sqrt(dot(wv, wv))
		// Stop at the last step or when the Krylov space is invariant to rounding (the
		// new direction is below 1e-10 of ‖Av‖): a further vector would be noise that
		// need not stay orthogonal to the locked ones.
		if j == steps-1 || b <= 1e-10*nw {
			beta = append(beta, b)
			if j < steps-1 {
				beta[len(beta)-1] = 0
			}
			break
		}
		beta = append(beta, b)
		next := make([]float64, n)
		for i := range next {
			next[i] = wv[i] / b
		}
		v = next
	}
	m := len(alpha)
	t := mat.NewSymDense(m, nil)
	for i := 0; i < m; i++ {
		t.SetSym(i, i, alpha[i])
		if i+1 < m {
			t.SetSym(i, i+1, beta[i])
		}
	}
	var es mat.EigenSym
	if !es.Factorize(t, true) {
		return nil, nil, nil
	}
	theta := es.Values(nil)
	var s mat.Dense
	es.VectorsTo(&s)
	resid := make([]float64, m)
	for k := 0; k < m; k++ {
		resid[k] = math.Abs(beta[m-1] * s.At(m-1, k))
	}
	ritz := func(k int) []float64 {
		y := make([]float64, n)
		for i := 0; i < m; i++ {
			c := s.At(i, k)
			for l := range y {
				y[l] += c * q[i][l]
			}
		}
		if ny := math.Sqrt(dot(y, y)); ny > 0 {
			for l := range y {
				y[l] /= ny
			}
		}
		return y
	}
	return theta, ritz, resid
}
