package main

import (
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

// BenchmarkApplyEndToEnd runs the built command on a 1.06 GB input: 80 times × 30
// levels of a float64 field on the cubed sphere N=96 (55,296 cells, record dimension
// unlimited, one record per chunk), mapped to the 1° latitude–longitude grid (64,800
// cells) by the conservative map of order 1 or 2, with --memory 512MiB; and nccopy of
// the same input in the same run, alternating, reps times (COLBRIDGE_BENCH_REPS, default
// 3). Reported medians: apply-s, nccopy-s, ratio (apply ÷ nccopy), nccopy+sync-s
// (nccopy then fsync of its output, the durability apply's Commit gives) and its ratio,
// rss-MiB (peak resident set of apply, from getrusage) against budget-MiB, and the load
// average. The page cache holds the input for both. Skipped without nccopy.
func BenchmarkApplyEndToEnd(b *testing.B) {
	nccopy, err := exec.LookPath("nccopy")
	if err != nil {
		b.Skip("nccopy (netcdf-bin) is not installed")
	}
	reps := 3
	if s := os.Getenv("COLBRIDGE_BENCH_REPS"); s != "" {
		if reps, err = strconv.Atoi(s); err != nil || reps < 1 {
			b.Fatalf("COLBRIDGE_BENCH_REPS=%q", s)
		}
	}
	dir := b.TempDir()
	bin := filepath.Join(dir, "colbridge")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		b.Fatalf("go build: %v\n%s", err, out)
	}
	c96, ll := filepath.Join(dir, "c96.nc"), filepath.Join(dir, "ll1.nc")
	for _, args := range [][]string{
		{"mesh", "make", "cubed", "--n", "96", "-o", c96},
		{"mesh", "make", "latlon", "--nlon", "360", "--nlat", "180", "-o", ll},
	} {
		if out, err := exec.Command(bin, args...).CombinedOutput(); err != nil {
			b.Fatalf("%v: %v\n%s", args, err, out)
		}
	}
	in := filepath.Join(dir, "in.nc")
	fieldFile(b, in, 80, 30, 55296)
	st, err := os.Stat(in)
	must(b, err)
	const budget = 512 << 20
	for _, order := range []int{1, 2} {
		b.Run(fmt.Sprintf("c96-to-1deg/order%d", order), func(b *testing.B) {
			m := filepath.Join(dir, fmt.Sprintf("m%d.nc", order))
			if out, err := exec.Command(bin, "weights", "--source", c96, "--target", ll, "--method", "conservative",
				"--order", strconv.Itoa(order), "-q", "-o", m).CombinedOutput(); err != nil {
				b.Fatalf("weights: %v\n%s", err, out)
			}
			var tApply, tNoSync, tCopy, tCopySync, rss []float64
			load := loadAvg()
			for b.Loop() {
				for range reps {
					cp := filepath.Join(dir, "copy.nc")
					t0 := time.Now()
					if out, err := exec.Command(nccopy, in, cp).CombinedOutput(); err != nil {
						b.Fatalf("nccopy: %v\n%s", err, out)
					}
					tc := time.Since(t0).Seconds()
					f, err := os.Open(cp)
					must(b, err)
					must(b, f.Sync())
					f.Close()
					tCopy = append(tCopy, tc)
					tCopySync = append(tCopySync, time.Since(t0).Seconds())
					must(b, os.Remove(cp))

					out := filepath.Join(dir, "out")
					cmd := exec.Command(bin, "apply", "-q", "--map", m, "--out-dir", out, "--memory", "512MiB", in)
					var stderr bytes.Buffer
					cmd.Stderr = &stderr
					t0 = time.Now()
					if err := cmd.Run(); err != nil {
						b.Fatalf("apply: %v\n%s", err, stderr.String())
					}
					tApply = append(tApply, time.Since(t0).Seconds())
					if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok {
						rss = append(rss, float64(ru.Maxrss)/1024) // KiB on Linux
					}
					must(b, os.RemoveAll(out))

					// The same without fsync, like nccopy.
					t0 = time.Now()
					if out, err := exec.Command(bin, "apply", "-q", "--no-sync", "--map", m, "--out-dir", out, "--memory", "512MiB", in).CombinedOutput(); err != nil {
						b.Fatalf("apply --no-sync: %v\n%s", err, out)
					}
					tNoSync = append(tNoSync, time.Since(t0).Seconds())
					must(b, os.RemoveAll(out))
				}
			}
			load = (load + loadAvg()) / 2
			ma, mc, ms := med(tApply), med(tCopy), med(tCopySync)
			b.ReportMetric(ma, "apply-s")
			b.ReportMetric(mc, "nccopy-s")
			b.ReportMetric(ma/mc, "ratio")
			b.ReportMetric(ms, "nccopy+sync-s")
			b.ReportMetric(ma/ms, "ratio-sync")
			b.ReportMetric(med(tNoSync), "nosync-s")
			b.ReportMetric(med(tNoSync)/mc, "ratio-nosync")
			b.ReportMetric(float64(st.Size())/(1<<20)/ma, "MiB/s")
			b.ReportMetric(budget>>20, "budget-MiB")
			b.ReportMetric(load, "load1")
			if len(rss) > 0 {
				peak := slices.Max(rss)
				b.ReportMetric(peak, "rss-MiB")
				if peak > budget>>20 {
					b.Errorf("peak resident set %.0f MiB exceeds the --memory budget %d MiB", peak, budget>>20)
				}
			}
			b.Logf("apply %v s; nccopy %v s; nccopy+sync %v s; rss %v MiB", tApply, tCopy, tCopySync, rss)
		})
	}
}

func med(x []float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	return s[len(s)/2]
}

// loadAvg returns the 1-minute load average (Linux; 0 elsewhere).
func loadAvg() float64 {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return 0
	}
	l, _ := strconv.ParseFloat(strings.Fields(string(b))[0], 64)
	return l
}
