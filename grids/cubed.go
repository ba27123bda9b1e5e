package grids

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// cubePanels are the six faces of the cube: centre c and in-face axes e1, e2 with
// e1 × e2 = c, so cells listed with increasing (i, j) are counter-clockwise from outside.
// Panels 0–3 circle the equator eastward from longitude 0; 4 is north, 5 south.
var cubePanels = [6][3][3]int{
	// {centre, e1, e2} as signed axis numbers: 1 = +x, 2 = +y, 3 = +z, negative = minus.
	{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
	{{0, 1, 0}, {-1, 0, 0}, {0, 0, 1}},
	{{-1, 0, 0}, {0, -1, 0}, {0, 0, 1}},
	{{0, -1, 0}, {1, 0, 0}, {0, 0, 1}},
	{{0, 0, 1}, {0, 1, 0}, {-1, 0, 0}},
	{{0, 0, -1}, {0, 1, 0}, {1, 0, 0}},
}

// CubedSphereTangents returns t_i = tan(−π/4 + iπ/(2n)), i = 0..n: the equiangular
// gnomonic coordinates of the panel grid lines, made exactly antisymmetric
// (t_{n−i} = −t_i, t_0 = −1, t_n = 1) so that shared panel edges coincide bit for bit.
func CubedSphereTangents(n int) []float64 {
	t := make([]float64, n+1)
	for i := 0; 2*i <= n; i++ {
		v := math.Tan(-math.Pi/4 + float64(i)*math.Pi/float64(2*n))
		t[i], t[n-i] = v, -v
	}
	t[0], t[n] = -1, 1
	if n%2 == 0 {
		t[n/2] = 0
	}
	return t
}

// NewCubedSphere returns the equiangular gnomonic cubed sphere with n cells along each panel
// edge: 6n² quadrilateral cells, 12n² edges and 6n² + 2 vertices. Panels are numbered as
// in cubePanels (0–3 around the equator from longitude 0 eastward, 4 north, 5 south); cell
// (p, i, j) has index p·n² + j·n + i. radius ≤ 0 means EarthRadius.
func NewCubedSphere(n int, radius float64) (*Mesh, error) {
	if n < 1 || n > 8192 {
		return nil, fmt.Errorf("cubed sphere: n = %d outside [1, 8192]", n)
	}
	t := CubedSphereTangents(n)
	np := n + 1
	// A point of the cube surface has integer coordinates (I, J, K) in [0, n]³, the value of
	// each being t[index]; points on panel edges are shared and looked up in a small map.
	ids := make(map[[3]int32]int32, 12*n+8)
	verts := make([]r3.Vec, 0, 6*n*n+2)
	panelIDs := make([]int32, 6*np*np)
	// pick maps the grid index k along a signed axis component to a cube coordinate index.
	pick := func(sign, k int) int32 {
		if sign > 0 {
			return int32(k)
		}
		return int32(n - k)
	}
	for p, pan := range cubePanels {
		for j := 0; j <= n; j++ {
			for i := 0; i <= n; i++ {
				var key [3]int32
				for d := 0; d < 3; d++ {
					switch {
					case pan[0][d] != 0:
						key[d] = pick(pan[0][d], n)
					case pan[1][d] != 0:
						key[d] = pick(pan[1][d], i)
					default:
						key[d] = pick(pan[2][d], j)
					}
				}
				boundary := i == 0 || j == 0 || i == n || j == n
				if boundary {
					if id, ok := ids[key]; ok {
						panelIDs[(p*np+j)*np+i] = id
						continue
					}
				}
				id := int32(len(verts))
				x, y, z := t[key[0]], t[key[1]], t[key[2]]
				r := 1 / math.Sqrt(x*x+y*y+z*z)
				verts = append(verts, r3.Vec{X: x * r, Y: y * r, Z: z * r})
				if boundary {
					ids[key] = id
				}
				panelIDs[(p*np+j)*np+i] = id
			}
		}
	}
	nc := 6 * n * n
	cellStart := make([]int32, nc+1)
	cellVerts := make([]int32, 4*nc)
	for p := 0; p < 6; p++ {
		for j := 0; j < n; j++ {
			for i := 0; i < n; i++ {
				c := (p*n+j)*n + i
				cellStart[c+1] = int32(4 * (c + 1))
				id := func(i, j int) int32 { return panelIDs[(p*np+j)*np+i] }
				cellVerts[4*c] = id(i, j)
				cellVerts[4*c+1] = id(i+1, j)
				cellVerts[4*c+2] = id(i+1, j+1)
				cellVerts[4*c+3] = id(i, j+1)
			}
		}
	}
	return Build(MeshSpec{
		Name: fmt.Sprintf("cubed-sphere N=%d", n), Surface: Sphere, Radius: radius,
		Verts: verts, CellStart: cellStart, CellVerts: cellVerts,
	})
}
