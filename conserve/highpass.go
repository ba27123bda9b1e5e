package conserve

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/par"
	"github.com/colbridge/colbridge/weights"
)

// HighPassOptions tunes the noise and damping measurement on meshes without a translation
// lattice (the sphere), check 6b.
type HighPassOptions struct {
	// Power is p in the filter H = ((I − D⁻¹A)/2)^p (0 means 3).
	Power int
	// Members is the size of the smooth random ensemble (0 means 8) and Axes the number
	// of random axes for the damping curve (0 means 3).
	Members, Axes int
	// Smooth is the shortest wavelength, in grid lengths, in the smooth ensemble (0
	// means 8).
	Smooth float64
	// Seed seeds the ensemble (0 means 1).
	Seed uint64
}

func (o HighPassOptions) power() int      { return defInt(o.Power, 3) }
func (o HighPassOptions) members() int    { return defInt(o.Members, 8) }
func (o HighPassOptions) axes() int       { return defInt(o.Axes, 3) }
func (o HighPassOptions) smooth() float64 { return defFloat(o.Smooth, 8) }
func (o HighPassOptions) seed() uint64 {
	if o.Seed != 0 {
		return o.Seed
	}
	return 1
}

// Adjacency returns the cell neighbours of m: the cells sharing an edge with each cell.
func Adjacency(m *grids.Mesh) [][]int32 {
	adj := make([][]int32, m.NumCells())
	for _, ec := range m.EdgeCells {
		a, b := ec[0], ec[1]
		if a < 0 || b < 0 || a == b {
			continue
		}
		adj[a] = append(adj[a], b)
		adj[b] = append(adj[b], a)
	}
	return adj
}

// HighPassTo sets dst = H·x with H = ((I − D⁻¹A)/2)^p, A the cell adjacency (cells that
// share an edge), D its degree matrix: (I − D⁻¹A)x at a cell is its value minus the mean
// of its neighbours. It is the documented grid-scale filter of check 6b.
//
// On a uniform quadrilateral lattice a Fourier mode with θ = (kx·Δx, ky·Δy) is an
// eigenvector with gain g = ((1 − (cos θx + cos θy)/2)/2)^p. For p = 3: the checkerboard
// (θ = (π, π), wavelength √2·Δ) passes with gain 1; waves along a grid axis pass with
// 0.125 at 2Δ, 0.0527 at 3Δ and 3.93e-4 at 8Δ; diagonal waves of wavelength λ (in grid
// lengths) have θx = θy = √2π/λ, gain 0.0943 at λ = 3 and 4.24e-4 at λ = 8. On a bipartite
// mesh (triangles in the plane) the alternating up/down pattern has gain 1; on hexagonal
// meshes the most oscillatory patterns have (1 − (−1/2))/2 = 3/4, gain 0.42. So the filter
// passes wavelengths ≤ 3 grid lengths with gains ≥ 0.05 and attenuates those ≥ 8 more
// than a hundred times as much as any 3Δ wave.
func HighPassTo(dst, x []float64, adj [][]int32, p int) {
	if len(dst) != len(x) || len(adj) != len(x) {
		panic("conserve: HighPassTo: lengths differ")
	}
	cur := append([]float64(nil), x...)
	for range p {
		for c, nb := range adj {
			if len(nb) == 0 {
				dst[c] = 0
				continue
			}
			s := 0.0
			for _, o := range nb {
				s += cur[o]
			}
			dst[c] = (cur[c] - s/float64(len(nb))) / 2
		}
		copy(cur, dst)
	}
	copy(dst, cur)
}

// SphereNoiseReport is check 6b on the sphere (or any mesh without a lattice): the
// round trip R applied to smooth zonal harmonics, with the grid-scale share measured by
// the high-pass filter of HighPassTo.
type SphereNoiseReport struct {
	// GridLength is √(mean cell area) of the dynamics mesh (m on the sphere).
	GridLength  float64 `json:"grid_length"`
	FilterPower int     `json:"filter_power"`
	// SmoothMaxDegree is the largest degree l in the smooth ensemble: wavelength
	// 2πR/√(l(l+1)) ≥ Smooth grid lengths (Jeans' relation).
	SmoothMaxDegree int `json:"smooth_max_degree"`
	Members         int `json:"members"`
	// InputShareMax is the largest ‖Hf‖/‖f‖ over the ensemble (the filter's leak on
	// smooth inputs, the floor of the measurement); OutputShareMax and OutputShareMean
	// are ‖H Rf‖/‖Rf‖ over the ensemble (norms in the source measure).
	InputShareMax   float64 `json:"input_share_max"`
	OutputShareMax  float64 `json:"output_share_max"`
	OutputShareMean float64 `json:"output_share_mean"`
	// Damping is the response ⟨R f, f⟩/⟨f, f⟩ of zonal harmonics f = P_l(n·x) about
	// random axes n, per degree l down to wavelengths of 2 grid lengths.
	Damping []SphereDamping `json:"damping"`
}

// SphereDamping is the mean response at one degree.
type SphereDamping struct {
	Degree     int     `json:"degree"`
	Wavelength float64 `json:"wavelength"`
	Response   float64 `json:"response"`
}

func randomAxis(rng *rand.Rand) r3.Vec {
	for {
		v := r3.Vec{X: rng.NormFloat64(), Y: rng.NormFloat64(), Z: rng.NormFloat64()}
		if n := r3.Norm(v); n > 1e-3 {
			return r3.Scale(1/n, v)
		}
	}
}

// SphereNoise measures the round trip r (sparse factors applied right to left, square on
// the cells of m) on zonal harmonics sampled at the cell centroids of a sphere mesh m
// with cell measures ms.
//
// Damping: for Axes random axes n, P_l(n·x) for l = 1, 2, … up to wavelength 2 grid
// lengths (by the upward recurrence, stable for |n·x| ≤ 1), all degrees when there are
// at most 64, else 48 degrees spaced evenly in log l; the response is
// ⟨R f, f⟩/⟨f, f⟩ averaged over the axes. Noise: Members random fields
// Σ_k Σ_{l ≤ L} a_{kl} P_l(n_k·x) over 4 shared random axes n_k with independent
// standard normal a_{kl}, L the largest smooth degree. Cost: O(N·(L_max·Axes + L·4·
// Members)) plus one round trip per sampled degree and axis and per member.
func SphereNoise(m *grids.Mesh, ms []float64, r []*weights.CSR, opt HighPassOptions) (*SphereNoiseReport, error) {
	if m.Surface != grids.Sphere {
		return nil, fmt.Errorf("sphere noise: mesh %q is not on the sphere", m.Name)
	}
	n := m.NumCells()
	op := chain(r)
	if rr, cc := op.dims(); rr != n || cc != n {
		panic(fmt.Sprintf("conserve: SphereNoise: round trip is %d × %d on a mesh of %d cells", rr, cc, n))
	}
	adj := Adjacency(m)
	h := math.Sqrt(m.TotalArea() / float64(n))
	R := m.Radius
	wavelength := func(l int) float64 { return 2 * math.Pi * R / math.Sqrt(float64(l*(l+1))) / h }
	rep := &SphereNoiseReport{GridLength: h, FilterPower: opt.power(), Members: opt.members()}
	for l := 1; wavelength(l) >= opt.smooth(); l++ {
		rep.SmoothMaxDegree = l
	}
	lmax := 0
	for l := 1; wavelength(l) >= 2; l++ {
		lmax = l
	}
	rng := rand.New(rand.NewPCG(opt.seed(), 0x73706865))
	y := make([]float64, n)
	hf := make([]float64, n)
	share := func(x []float64) float64 {
		nx := weightedNorm(x, ms)
		if nx == 0 {
			return 0
		}
		HighPassTo(hf, x, adj, rep.FilterPower)
		return weightedNorm(hf, ms) / nx
	}
	legendreSweep := func(axis r3.Vec, top int, visit func(l int, p []float64)) {
		zonalSweep(m.CellCentroid, axis, top, visit)
	}
	if L := rep.SmoothMaxDegree; L >= 1 {
		const axes = 4
		members := make([][]float64, rep.Members)
		for i := range members {
			members[i] = make([]float64, n)
		}
		for range axes {
			coef := make([]float64, rep.Members*(L+1))
			for i := range coef {
				coef[i] = rng.NormFloat64()
			}
			legendreSweep(randomAxis(rng), L, func(l int, p []float64) {
				for i, f := range members {
					a := coef[i*(L+1)+l]
					for c := range f {
						f[c] += a * p[c]
					}
				}
			})
		}
		var sum float64
		for _, f := range members {
			rep.InputShareMax = math.Max(rep.InputShareMax, share(f))
			op.apply(y, f)
			s := share(y)
			sum += s
			rep.OutputShareMax = math.Max(rep.OutputShareMax, s)
		}
		rep.OutputShareMean = sum / float64(rep.Members)
	}
	sampled := map[int]bool{}
	if lmax <= 64 {
		for l := 1; l <= lmax; l++ {
			sampled[l] = true
		}
	} else {
		for i := 0; i < 48; i++ {
			sampled[int(math.Round(math.Pow(float64(lmax), float64(i)/47)))] = true
		}
	}
	resp := make([]float64, lmax+1)
	for range opt.axes() {
		legendreSweep(randomAxis(rng), lmax, func(l int, p []float64) {
			if !sampled[l] {
				return
			}
			op.apply(y, p)
			if d := weightedDot(p, p, ms); d > 0 {
				resp[l] += weightedDot(y, p, ms) / d
			}
		})
	}
	for l := 1; l <= lmax; l++ {
		if sampled[l] {
			rep.Damping = append(rep.Damping, SphereDamping{Degree: l, Wavelength: wavelength(l), Response: resp[l] / float64(opt.axes())})
		}
	}
	return rep, nil
}

// zonalSweep runs the upward recurrence lP_l = (2l−1)μP_{l−1} − (l−1)P_{l−2} for
// μ = axis·x at every point x and calls visit(l, p) with p[i] = P_l(μ_i) for l = 1..top
// (p is reused between calls).
func zonalSweep(points []r3.Vec, axis r3.Vec, top int, visit func(l int, p []float64)) {
	n := len(points)
	mu := make([]float64, n)
	p0 := make([]float64, n)
	p1 := make([]float64, n)
	for c := range mu {
		mu[c] = r3.Dot(axis, points[c])
		p0[c], p1[c] = 1, mu[c]
	}
	for l := 1; l <= top; l++ {
		if l > 1 {
			a, b := float64(2*l-1)/float64(l), float64(l-1)/float64(l)
			par.For(n, 0, 1<<14, func(lo, hi int) {
				for c := lo; c < hi; c++ {
					p0[c], p1[c] = p1[c], a*mu[c]*p1[c]-b*p0[c]
				}
			})
		}
		visit(l, p1)
	}
}
