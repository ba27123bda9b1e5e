package analytic

import (
	"fmt"
	"sync"

	"gonum.org/v1/gonum/integrate/quad"
)

// glRule is an n-point Gauss–Legendre rule on [−1, 1].
type glRule struct{ x, w []float64 }

var glCache sync.Map // int → glRule

// gaussLegendre returns the nodes and weights of the n-point
// Gauss–Legendre rule on [−1, 1], exact for polynomials of degree
// 2n − 1. Nodes and weights come from gonum's quad.Legendre (Bogaert
// 2014, accurate to a few ulps) and are cached; callers must not modify
// the returned slices. It panics if n < 1.
func gaussLegendre(n int) (x, w []float64) {
	if n < 1 {
		panic(fmt.Sprintf("analytic: quadrature order %d < 1", n))
	}
	if r, ok := glCache.Load(n); ok {
		r := r.(glRule)
		return r.x, r.w
	}
	x = make([]float64, n)
	w = make([]float64, n)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	r, _ := glCache.LoadOrStore(n, glRule{x: x, w: w})
	return r.(glRule).x, r.(glRule).w
}
