package main

import (
	"fmt"
	"path/filepath"
	"testing"

	"github.com/colbridge/colbridge/grids"
)

// BenchmarkWeightsCommand times `colbridge weights` end to end — reading both mesh files,
// building the map, writing the map file — for the issue-3 sizes: the cubed sphere with
// N = 384 (884,736 cells) to the 0.25° lat–lon grid (1440 × 720; about 4.2 million
// overlaps), and the same pair with 4× fewer cells (N = 192 to 0.5°) for the scaling
// check. Goals: order 1 ≤ 10 s, order 2 ≤ 20 s, peak memory ≤ 2 GB, time growth ≤ 4.6×
// for 4× the cells.
func BenchmarkWeightsCommand(b *testing.B) {
	dir := b.TempDir()
	for _, size := range []struct{ n, nlon, nlat int }{{192, 720, 360}, {384, 1440, 720}} {
		src := filepath.Join(dir, fmt.Sprintf("c%d.nc", size.n))
		tgt := filepath.Join(dir, fmt.Sprintf("ll%d.nc", size.nlon))
		cs, err := grids.NewCubedSphere(size.n, 0)
		if err != nil {
			b.Fatal(err)
		}
		if err := grids.WriteUGRID(src, cs); err != nil {
			b.Fatal(err)
		}
		ll, err := grids.NewLatLon(grids.LatLonSpec{NLon: size.nlon, NLat: size.nlat})
		if err != nil {
			b.Fatal(err)
		}
		if err := grids.WriteUGRID(tgt, ll); err != nil {
			b.Fatal(err)
		}
		cs, ll = nil, nil
		for _, order := range []int{1, 2} {
			b.Run(fmt.Sprintf("N=%d/order=%d", size.n, order), func(b *testing.B) {
				for i := 0; i < b.N; i++ {
					var e env
					code := run([]string{"weights", "--source", src, "--target", tgt, "--method", "conservative",
						"--order", fmt.Sprint(order), "-q", "-o", filepath.Join(dir, "m.nc")}, &env{stdout: discard{}, stderr: discard{}, args: e.args})
					if code != 0 {
						b.Fatalf("exit %d", code)
					}
				}
			})
		}
	}
}

type discard struct{}

func (discard) Write(p []byte) (int, error) { return len(p), nil }
