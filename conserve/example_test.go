package conserve_test

import (
	"fmt"

	"github.com/colbridge/colbridge/conserve"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// Auditing a vertical map: averaging 5 interface values to 4 layers is conservative
// (with the dual thicknesses as interface measures, each interface gives half of its
// value to each neighbouring layer) and consistent, and cannot see the zigzag (−1)^k.
func ExampleAudit() {
	lv, _ := grids.NewUniformLevels(grids.Height, 4, 0, 1000)
	dz := lv.Thicknesses()
	var ts []weights.Triplet
	for k := 0; k < 4; k++ {
		ts = append(ts, weights.Triplet{Row: int32(k), Col: int32(k), Value: 0.5},
			weights.Triplet{Row: int32(k), Col: int32(k + 1), Value: 0.5})
	}
	// Interface measures: half a layer at each end, a whole layer inside.
	mi := []float64{dz[0] / 2, dz[0], dz[1], dz[2], dz[3] / 2}
	m := &weights.Map{
		W:      weights.FromTriplets(4, 5, ts),
		Source: weights.Side{Location: grids.Location{H: grids.Cell, V: grids.Interface}, Size: 5, Measure: mi},
		Target: weights.Side{Location: grids.Location{H: grids.Cell, V: grids.Layer}, Size: 4, Measure: dz},
		Method: "vertical-linear", Order: 2,
	}
	r, err := conserve.Audit(m, conserve.Options{Spectral: true, Thresholds: conserve.StrictThresholds()})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("conservation defect %.3g\n", *r.ConservationMaxDefect)
	fmt.Printf("consistency defect %.3g\n", r.ConsistencyMaxDefect)
	fmt.Printf("null space dimension %d, mode %v\n", r.NullSpace.Dimension, r.NullSpace.WorstMode())
	fmt.Println("passed:", r.Passed)
	for _, f := range r.Failures {
		fmt.Println("failed:", f.Gate)
	}
	// Output:
	// conservation defect 0
	// consistency defect 0
	// null space dimension 1, mode [1 -1 1 -1 1]
	// passed: true
}
