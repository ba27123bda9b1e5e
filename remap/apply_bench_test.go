package remap

import (
	"fmt"
	"math"
	"os"
	"strings"
	"testing"
	"time"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/par"
	"github.com/colbridge/colbridge/weights"
)

// benchMap builds the conservative map of the given order from the cubed sphere N=96
// (55,296 cells) to the 1° latitude–longitude grid (64,800 cells).
func benchMap(b *testing.B, order int) *weights.CSR {
	b.Helper()
	src, err := grids.NewCubedSphere(96, 0)
	check(b, err)
	tgt, err := grids.NewLatLon(grids.LatLonSpec{NLon: 360, NLat: 180})
	check(b, err)
	m, err := Build(src, tgt, Options{Method: Conservative, Order: order})
	check(b, err)
	return m.W
}

// BenchmarkApplyKernel measures the in-memory application of the cubed N=96 → 1°
// conservative map (order 1: 256k weights, order 2: 1.05M) to n = 64 slices in NetCDF
// order (28 MiB in, 33 MiB out: one chunk of the end-to-end run), against a plain memory
// copy measured in the same benchmark. Bandwidth counts the bytes read and written
// (input and output fields; the copy's source and destination, 256 MiB each so that
// caches do not hold them). Reported: mapGB/s (MultiApplyTo), copyGB/s (one goroutine's
// copy, the memmove of the runtime) and pcopyGB/s (GOMAXPROCS goroutines), ratio =
// mapGB/s ÷ the larger copy figure; and for comparison the interleaved layout
// (transposes + CSR.ApplyBatchTo + transpose back) as batchGB/s. Medians of 5 runs each;
// the load average is logged.
func BenchmarkApplyKernel(b *testing.B) {
	for _, order := range []int{1, 2} {
		b.Run(fmt.Sprintf("c96-to-1deg/order%d", order), func(b *testing.B) {
			w := benchMap(b, order)
			const n = 64
			src := make([]float64, n*w.Cols)
			for i := range src {
				src[i] = math.Sin(float64(i) * 1e-3)
			}
			dst := make([]float64, n*w.Rows)
			// Correctness before timing: one vector against CSR.ApplyTo.
			MultiApplyTo(dst, src, w, n, false, 0)
			one := make([]float64, w.Rows)
			w.ApplyTo(one, src[5*w.Cols:6*w.Cols])
			for i, x := range one {
				// A build that fuses multiply-adds (GOAMD64=v3) may round the two
				// differently: allow a few roundings of a value of order one.
				if math.Abs(dst[5*w.Rows+i]-x) > 1e-14 {
					b.Fatalf("row %d differs from ApplyTo: %v, %v", i, dst[5*w.Rows+i], x)
				}
			}
			cp := make([]float64, 32<<20) // 256 MiB
			cp2 := make([]float64, len(cp))
			for i := range cp {
				cp[i], cp2[i] = 1, 2
			}
			srcT := make([]float64, len(src))
			dstT := make([]float64, len(dst))
			bytes := float64(len(src)+len(dst)) * 8
			med := func(f func()) float64 {
				var ts []float64
				for range 5 {
					t0 := time.Now()
					f()
					ts = append(ts, time.Since(t0).Seconds())
				}
				return median(ts)
			}
			var mapBW, batchBW, copyBW, pcopyBW float64
			for b.Loop() {
				mapBW = bytes / med(func() { MultiApplyTo(dst, src, w, n, false, 0) }) / 1e9
				batchBW = bytes / med(func() {
					transposeTo(srcT, src, n, w.Cols, 0)
					w.ApplyBatchTo(dstT, srcT, n)
					transposeTo(dst, dstT, w.Rows, n, 0)
				}) / 1e9
				copyBW = 16 * float64(len(cp)) / med(func() { copy(cp2, cp) }) / 1e9
				pcopyBW = 16 * float64(len(cp)) / med(func() {
					par.For(len(cp), 0, 1<<20, func(lo, hi int) { copy(cp2[lo:hi], cp[lo:hi]) })
				}) / 1e9
			}
			b.ReportMetric(mapBW, "mapGB/s")
			b.ReportMetric(batchBW, "batchGB/s")
			b.ReportMetric(copyBW, "copyGB/s")
			b.ReportMetric(pcopyBW, "pcopyGB/s")
			b.ReportMetric(mapBW/math.Max(copyBW, pcopyBW), "ratio")
			b.ReportMetric(loadAverage(), "load1")
		})
	}
}

func median(x []float64) float64 {
	s := append([]float64(nil), x...)
	for i := range s {
		for j := i + 1; j < len(s); j++ {
			if s[j] < s[i] {
				s[i], s[j] = s[j], s[i]
			}
		}
	}
	return s[len(s)/2]
}

// loadAverage returns the 1-minute load average (Linux), NaN elsewhere.
func loadAverage() float64 {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return math.NaN()
	}
	var l float64
	if _, err := fmt.Sscan(strings.Fields(string(b))[0], &l); err != nil {
		return math.NaN()
	}
	return l
}
