package ncio

import (
	"runtime"
	"sync"
)

// The NetCDF C library (and HDF5 under it) is not thread-safe, and HDF5
// keeps its error-printing switch per OS thread. So every library call of
// this package runs on one goroutine, locked to one OS thread, started on
// first use and never stopped. Public methods package their work as a
// closure, send it there and wait.

type job struct {
	fn   func()
	done chan any // receives nil, or the value of a panic in fn
}

var (
	ioOnce sync.Once
	ioJobs chan job
	// hdf5Silenced records whether H5Eset_auto2 succeeded on the I/O thread
	// (false also when HDF5 is not loaded). Written once before any job runs.
	hdf5Silenced bool
)

func startIO() {
	ioJobs = make(chan job)
	ready := make(chan struct{})
	go func() {
		runtime.LockOSThread() // never unlocked: the thread belongs to this goroutine
		hdf5Silenced, _ = silenceHDF5()
		scratch = make([]uint64, scratchBytes/8)
		close(ready)
		for j := range ioJobs {
			j.done <- protect(j.fn)
		}
	}()
	<-ready
}

// protect runs fn and returns the value of a panic in it, so that a
// programming error in a job panics in the caller, not in the I/O goroutine.
func protect(fn func()) (p any) {
	defer func() { p = recover() }()
	fn()
	return nil
}

var donePool = sync.Pool{New: func() any { return make(chan any, 1) }}

// run executes fn on the I/O goroutine and waits for it. fn must not call
// run (it would wait for itself).
func run(fn func()) {
	ioOnce.Do(startIO)
	done := donePool.Get().(chan any)
	ioJobs <- job{fn: fn, done: done}
	p := <-done
	donePool.Put(done)
	if p != nil {
		panic(p)
	}
}

// scratchBytes is the size of the buffer used to convert between the
// stored type and the caller's type: a hyperslab larger than this is read
// or written in pieces of at most this many bytes, so a conversion never
// allocates a second full-size array.
const scratchBytes = 1 << 20

// scratch belongs to the I/O goroutine (only jobs touch it). It is a
// []uint64 so that any numeric view of it is aligned.
var scratch []uint64
