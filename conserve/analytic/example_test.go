package analytic_test

import (
	"fmt"
	"math"

	"github.com/colbridge/colbridge/conserve/analytic"
	"gonum.org/v1/gonum/spatial/r3"
)

func ExampleTC2() {
	c := analytic.TC2{}
	fmt.Printf("h(pole) = %.3f m, h(equator) = %.3f m\n",
		c.Height(r3.Vec{Z: 1}), c.Height(analytic.Point(0, 0)))
	// Flux through the meridian arc from the equator to the north pole,
	// positive to the right (east) of the direction of travel: a·u₀.
	fmt.Printf("flux = %.6e m² s⁻¹\n", c.EdgeFlux(analytic.Point(0, 0), r3.Vec{Z: 1}))
	// Output:
	// h(pole) = 1092.833 m, h(equator) = 2998.115 m
	// flux = 2.459972e+08 m² s⁻¹
}

func ExampleFieldNamed() {
	f, err := analytic.FieldNamed("smooth")
	if err != nil {
		fmt.Println(err)
		return
	}
	// The cell mean over a 10°×10° lat–lon cell; exactly
	// 2 + [sin 2d/(2d)]·[1 − sin²d/3] = 2.969967 for d = 10°.
	d := math.Pi / 18
	mean := analytic.LatLonCellIntegral(0, d, 0, d, f.Eval, 8) / analytic.LatLonCellArea(0, d, 0, d)
	fmt.Printf("%s: global mean %g, cell mean %.6f\n", f.Name, f.Mean, mean)
	_, err = analytic.FieldNamed("nope")
	fmt.Println(err)
	// Output:
	// smooth: global mean 2, cell mean 2.969967
	// analytic: unknown test field "nope" (known: oscillatory, smooth, tc2-height, vortex)
}

func ExampleStdAtmosphere() {
	t, p, rho := analytic.StdAtmosphere(11000)
	fmt.Printf("11 km′: T = %.2f K, p = %.2f Pa, ρ = %.6f kg m⁻³\n", t, p, rho)
	// Output:
	// 11 km′: T = 216.65 K, p = 22632.06 Pa, ρ = 0.363918 kg m⁻³
}
