package remap

import (
	"fmt"
	"os"
	"sync"
)

// ApplyFiles applies the maps to many files, concurrently files at a time (≤ 0: 2), each
// into OutputPath(input, outDir); outDir is created if needed. opt.Memory is shared: each
// file in flight gets its part. With skipExisting an output that exists is left alone
// (Skipped). done, if not nil, is called once per file as it finishes (from one
// goroutine at a time), in completion order. It returns the results in input order; a
// failed file has Err set and leaves nothing at its output path, and does not stop the
// others.
func (a *Applier) ApplyFiles(inputs []string, outDir string, opt ApplyOptions, concurrent int, skipExisting bool, done func(*FileResult)) []*FileResult {
	if concurrent <= 0 {
		concurrent = 2
	}
	concurrent = min(concurrent, max(len(inputs), 1))
	if opt.Memory <= 0 {
		opt.Memory = DefaultMemory
	}
	// Maps are shared; each file's buffers get an equal part of the rest.
	opt.Memory = (opt.Memory-a.mapSize)/int64(concurrent) + a.mapSize
	results := make([]*FileResult, len(inputs))
	var mu sync.Mutex
	report := func(r *FileResult) {
		if done != nil {
			mu.Lock()
			done(r)
			mu.Unlock()
		}
	}
	mkErr := os.MkdirAll(outDir, 0o755)
	if mkErr == nil {
		if st, err := os.Stat(outDir); err != nil {
			mkErr = err
		} else if !st.IsDir() {
			mkErr = fmt.Errorf("%s is not a directory", outDir)
		}
	}
	idx := make(chan int)
	var wg sync.WaitGroup
	for range concurrent {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range idx {
				in := inputs[i]
				out := OutputPath(in, outDir)
				var r *FileResult
				switch {
				case mkErr != nil:
					r = &FileResult{Input: in, Output: out, Err: fmt.Errorf("output directory %s: %w", outDir, mkErr)}
				case skipExisting && exists(out):
					r = &FileResult{Input: in, Output: out, Skipped: true}
				default:
					r, _ = a.ApplyFile(in, out, opt)
				}
				results[i] = r
				report(r)
			}
		}()
	}
	for i := range inputs {
		idx <- i
	}
	close(idx)
	wg.Wait()
	return results
}

func exists(path string) bool {
	_, err := os.Lstat(path)
	return err == nil
}
