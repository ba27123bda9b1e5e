// Package par runs loops over index ranges on several goroutines. Work is split into
// contiguous blocks, so results written per index are identical for any worker count.
package par

import (
	"runtime"
	"sync"
)

// Workers returns n when positive, else GOMAXPROCS.
func Workers(n int) int {
	if n > 0 {
		return n
	}
	return runtime.GOMAXPROCS(0)
}

// For calls f(lo, hi) on disjoint blocks covering [0, n), using up to workers goroutines
// (GOMAXPROCS when workers ≤ 0). Blocks hold at least grain indices. It returns when every
// call has returned.
func For(n, workers, grain int, f func(lo, hi int)) {
	if n <= 0 {
		return
	}
	w := Workers(workers)
	grain = max(grain, 1)
	if w == 1 || n <= grain {
		f(0, n)
		return
	}
	// Several blocks per worker balance uneven work.
	blocks := min(w*8, (n+grain-1)/grain)
	size := (n + blocks - 1) / blocks
	var wg sync.WaitGroup
	jobs := make(chan int, blocks)
	for lo := 0; lo < n; lo += size {
		jobs <- lo
	}
	close(jobs)
	for i := 0; i < min(w, blocks); i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for lo := range jobs {
				f(lo, min(lo+size, n))
			}
		}()
	}
	wg.Wait()
}
