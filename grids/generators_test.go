package grids_test

import (
	"fmt"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/gridtest"
)

type counts struct{ v, e, f int }

type genCase struct {
	name string
	make func() (*grids.Mesh, error)
	want counts
}

// TestGeneratorCounts checks every generator's element counts against the closed-form
// counts of REFERENCES.md (Euler-characteristic formulas): cubed sphere F = 6N², E = 12N²,
// V = 6N²+2; icosahedral level k F = 20·4ᵏ, E = 30·4ᵏ, V = 10·4ᵏ+2 and its dual with
// exactly 12 pentagons; and runs the mesh contract on each.
func TestGeneratorCounts(t *testing.T) {
	pow4 := func(k int) int { return 1 << (2 * k) }
	var cases []genCase
	for _, n := range []int{1, 2, 5, 24} {
		n := n
		cases = append(cases, genCase{fmt.Sprintf("cubed N=%d", n), func() (*grids.Mesh, error) { return grids.NewCubedSphere(n, 0) }, counts{6*n*n + 2, 12 * n * n, 6 * n * n}})
	}
	for _, k := range []int{0, 1, 4} {
		k := k
		cases = append(cases,
			genCase{fmt.Sprintf("icos level %d", k), func() (*grids.Mesh, error) { return grids.NewIcosahedral(k, 0) }, counts{10*pow4(k) + 2, 30 * pow4(k), 20 * pow4(k)}},
			genCase{fmt.Sprintf("icos dual level %d", k), func() (*grids.Mesh, error) { return grids.NewIcosahedralDual(k, 0) }, counts{20 * pow4(k), 30 * pow4(k), 10*pow4(k) + 2}})
	}
	for _, ll := range [][2]int{{3, 2}, {180, 90}, {240, 121}} {
		nlon, nlat := ll[0], ll[1]
		cases = append(cases, genCase{fmt.Sprintf("latlon %dx%d", nlon, nlat), func() (*grids.Mesh, error) {
			return grids.NewLatLon(grids.LatLonSpec{NLon: nlon, NLat: nlat, Lon0: -0.3})
		}, counts{nlon*(nlat-1) + 2, nlon * (2*nlat - 1), nlon * nlat}})
	}
	for _, tri := range []bool{false, true} {
		tri := tri
		f := 1
		if tri {
			f = 2
		}
		cases = append(cases,
			genCase{fmt.Sprintf("plane torus tri=%v", tri), func() (*grids.Mesh, error) {
				return grids.NewPlane(grids.PlaneSpec{NX: 8, NY: 5, Lx: 1e6, Ly: 6e5, PeriodicX: true, PeriodicY: true, Triangles: tri})
			}, counts{40, 40 * (f + 1), 40 * f}},
			genCase{fmt.Sprintf("plane disk tri=%v", tri), func() (*grids.Mesh, error) {
				return grids.NewPlane(grids.PlaneSpec{NX: 8, NY: 5, Lx: 8, Ly: 5, Triangles: tri})
			}, counts{54, 8*6 + 9*5 + (f-1)*40, 40 * f}})
	}
	cases = append(cases, genCase{"line 16", func() (*grids.Mesh, error) { return grids.NewLine(16, 1.6e5, 0) }, counts{32, 48, 16}})

	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			m, err := tc.make()
			if err != nil {
				t.Fatal(err)
			}
			got := counts{m.NumVerts(), m.NumEdges(), m.NumCells()}
			if got.v != tc.want.v || got.f != tc.want.f {
				t.Errorf("V, F = %d, %d; want %d, %d", got.v, got.f, tc.want.v, tc.want.f)
			}
			if got.e != tc.want.e {
				t.Errorf("E = %d, want %d", got.e, tc.want.e)
			}
			gridtest.Check(t, m)
		})
	}
}

// TestIcosahedralDualPentagons: the dual of the icosahedral mesh has exactly 12 pentagons,
// the rest hexagons (REFERENCES.md, Euler characteristic).
func TestIcosahedralDualPentagons(t *testing.T) {
	m, err := grids.NewIcosahedralDual(3, 0)
	if err != nil {
		t.Fatal(err)
	}
	deg := map[int]int{}
	for c := 0; c < m.NumCells(); c++ {
		deg[len(m.CellVertices(c))]++
	}
	if deg[5] != 12 || deg[6] != m.NumCells()-12 {
		t.Errorf("degrees %v, want 12 pentagons and %d hexagons", deg, m.NumCells()-12)
	}
}
