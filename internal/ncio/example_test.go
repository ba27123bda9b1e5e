package ncio_test

import (
	"fmt"
	"log"
	"os"
	"path/filepath"

	"github.com/colbridge/colbridge/internal/ncio"
)

// A field on 4 cells with a record dimension, written atomically and read
// back as float64 (it is stored as float).
func Example() {
	dir, err := os.MkdirTemp("", "ncio-example")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "field.nc")

	w, err := ncio.Create(path, ncio.CreateOptions{})
	if err != nil {
		log.Fatal(err)
	}
	defer w.Abort() // no-op after Commit
	for _, err := range []error{
		w.DefDim("time", 0),
		w.DefDim("nCells", 4),
		w.DefVar("theta", ncio.Float32, []string{"time", "nCells"}),
		w.PutAttrText("theta", "units", "K"),
		w.PutAttrFloat64s("theta", "_FillValue", -999), // stored as float, like theta
		w.EndDef(),
		w.WriteFloat64s("theta", []int{0, 0}, []int{1, 4}, []float64{280, 281.5, 283, 284.25}),
		w.WriteFloat64s("theta", []int{1, 0}, []int{1, 4}, []float64{279, 280, 281, 282}),
		w.Commit(),
	} {
		if err != nil {
			log.Fatal(err)
		}
	}

	f, err := ncio.Open(path)
	if err != nil {
		log.Fatal(err)
	}
	defer f.Close()
	v, err := f.Var("theta")
	if err != nil {
		log.Fatal(err)
	}
	second := make([]float64, 4)
	if err := f.ReadFloat64s("theta", []int{1, 0}, []int{1, 4}, second); err != nil {
		log.Fatal(err)
	}
	units, _ := f.AttrText("theta", "units")
	fill, ok, _ := f.FillValue("theta")
	fmt.Println(v.Type, v.Dims, v.Shape, units, fill, ok)
	fmt.Println(second)
	err = f.ReadFloat64s("theta", []int{2, 0}, []int{1, 4}, second)
	fmt.Println(err != nil)
	// Output:
	// float [time nCells] [2 4] K -999 true
	// [279 280 281 282]
	// true
}
