package ncio

import (
	"fmt"
	"path/filepath"
	"testing"
)

// BenchmarkWriteRead writes n float64 values in slices of 1 Mi values
// (8 MiB), commits, reopens and reads them back in the same slices.
// Sizes: 1 Mi and 8 Mi values (8 and 64 MiB as float64), stored as double
// (no conversion) and as float (converted both ways through the 1 MiB
// scratch buffer). Bytes/op counts the float64 data once each way.
func BenchmarkWriteRead(b *testing.B) {
	for _, n := range []int{1 << 20, 8 << 20} {
		for _, t := range []Type{Float64, Float32} {
			b.Run(fmt.Sprintf("values=%dMi/stored=%s", n>>20, t), func(b *testing.B) {
				benchmarkWriteRead(b, n, t)
			})
		}
	}
}

func benchmarkWriteRead(b *testing.B, n int, t Type) {
	const slice = 1 << 20
	src := make([]float64, n)
	for i := range src {
		src[i] = float64(i % 1000) // exact in float32 too
	}
	dst := make([]float64, n)
	path := filepath.Join(b.TempDir(), "bench.nc")
	once := func() {
		w, err := Create(path, CreateOptions{})
		check(b, err)
		defer w.Abort()
		check(b, w.DefDim("n", n))
		check(b, w.DefVar("v", t, []string{"n"}))
		check(b, w.EndDef())
		for s := 0; s < n; s += slice {
			check(b, w.WriteFloat64s("v", []int{s}, []int{slice}, src[s:s+slice]))
		}
		check(b, w.Commit())
		f, err := Open(path)
		check(b, err)
		defer f.Close()
		for s := 0; s < n; s += slice {
			check(b, f.ReadFloat64s("v", []int{s}, []int{slice}, dst[s:s+slice]))
		}
	}
	once() // correctness before timing
	for i := range src {
		if dst[i] != src[i] {
			b.Fatalf("value %d: got %v, want %v", i, dst[i], src[i])
		}
	}
	b.SetBytes(int64(16 * n))
	b.ResetTimer()
	for b.Loop() {
		once()
	}
}

// BenchmarkReadOne reads one float64 from an open 1000-value variable: the
// cost of a call's round trip to the I/O goroutine plus the library's
// per-call overhead.
func BenchmarkReadOne(b *testing.B) {
	path := filepath.Join(b.TempDir(), "one.nc")
	w, err := Create(path, CreateOptions{})
	check(b, err)
	check(b, w.DefDim("n", 1000))
	check(b, w.DefVar("v", Float64, []string{"n"}))
	check(b, w.Commit())
	f, err := Open(path)
	check(b, err)
	defer f.Close()
	dst := make([]float64, 1)
	start, count := []int{500}, []int{1}
	for b.Loop() {
		if err := f.ReadFloat64s("v", start, count, dst); err != nil {
			b.Fatal(err)
		}
	}
}
