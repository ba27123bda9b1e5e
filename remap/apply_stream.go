package remap

import (
	"fmt"
	"math"
	"slices"
	"sync"

	"github.com/colbridge/colbridge/internal/ncio"
	"github.com/colbridge/colbridge/internal/par"
)

// The pipeline of one file. Three goroutines pass chunks (a few records of one job)
// along: the reader fills an input slot through ncio, the computer maps it into an output
// slot, the writer hands that to ncio. ncio runs every library call on its one I/O
// goroutine, so reading the next chunk and writing the last one take turns there while
// the arithmetic of the current one runs on all cores. Two input and two output slots
// bound the memory: at most two chunks are read ahead and two wait to be written.

// slots is the number of input and of output buffers.
const slots = 2

type chunkTask struct {
	j      *job
	start  []int // hyperslab of the leading dimensions
	count  []int
	nr     int // records in the chunk
	in     *inSlot
	out    *outSlot
	values int64
}

type inSlot struct {
	x    [][]float64 // per input: nr × ls × ns
	mass []float64   // nr × lm × ns
}

type outSlot struct {
	f64 []float64
	f32 []float32
}

func growF(b []float64, n int) []float64 {
	if cap(b) < n {
		return make([]float64, n)
	}
	return b[:n]
}

func growB(b []bool, n int) []bool {
	if cap(b) < n {
		return make([]bool, n)
	}
	return b[:n]
}

// chunks lists the chunks of a job in file order.
func (j *job) chunks() []*chunkTask {
	if j.records() == 0 {
		return nil
	}
	sd, sc, per := j.split()
	if sd < 0 {
		return []*chunkTask{{j: j, nr: 1}}
	}
	outer := 1
	for _, d := range j.lead[:sd] {
		outer *= d
	}
	var out []*chunkTask
	for o := 0; o < outer; o++ {
		idx := make([]int, len(j.lead))
		rem := o
		for d := sd - 1; d >= 0; d-- {
			idx[d] = rem % j.lead[d]
			rem /= j.lead[d]
		}
		for i0 := 0; i0 < j.lead[sd]; i0 += sc {
			c := min(sc, j.lead[sd]-i0)
			t := &chunkTask{j: j, start: slices.Clone(idx), count: make([]int, len(j.lead)), nr: c * per}
			t.start[sd] = i0
			for d := range t.count {
				switch {
				case d < sd:
					t.count[d] = 1
				case d == sd:
					t.count[d] = c
				default:
					t.count[d] = j.lead[d]
				}
			}
			out = append(out, t)
		}
	}
	return out
}

// slab returns the hyperslab of a chunk in a variable with the given trailing lengths.
func (t *chunkTask) slab(trailing ...int) (start, count []int) {
	n := len(t.start)
	start = make([]int, n+len(trailing))
	count = make([]int, n+len(trailing))
	copy(start, t.start)
	copy(count, t.count)
	copy(count[n:], trailing)
	return start, count
}

// runPipeline maps every chunk of every job and writes it.
func runPipeline(jobs []*job, w *ncio.Writer, in *inputFile, opt ApplyOptions, res *FileResult) error {
	var tasks []*chunkTask
	for _, j := range jobs {
		tasks = append(tasks, j.chunks()...)
	}
	res.Chunks = len(tasks)
	inFree := make(chan *inSlot, slots)
	outFree := make(chan *outSlot, slots)
	for range slots {
		inFree <- &inSlot{}
		outFree <- &outSlot{}
	}
	toCompute := make(chan *chunkTask, slots)
	toWrite := make(chan *chunkTask, slots)
	stop := make(chan struct{})
	var once sync.Once
	var firstErr error
	fail := func(err error) {
		once.Do(func() { firstErr = err; close(stop) })
	}
	var wg sync.WaitGroup
	var peak int64
	var peakMu sync.Mutex
	track := func(b int64) {
		peakMu.Lock()
		peak = max(peak, b)
		peakMu.Unlock()
	}

	// Reader.
	wg.Add(1)
	go func() {
		defer wg.Done()
		defer close(toCompute)
		for _, t := range tasks {
			var s *inSlot
			select {
			case s = <-inFree:
			case <-stop:
				return
			}
			t.in = s
			n, err := readChunk(in, t)
			if err != nil {
				fail(err)
				return
			}
			res.BytesRead += n
			if opt.Progress != nil {
				opt.Progress.Add(n)
			}
			select {
			case toCompute <- t:
			case <-stop:
				return
			}
		}
	}()

	// Computer.
	wg.Add(1)
	go func() {
		defer wg.Done()
		defer close(toWrite)
		sc := &applyScratch{workers: opt.Workers}
		for t := range toCompute {
			var o *outSlot
			select {
			case o = <-outFree:
			case <-stop:
				return
			}
			t.out = o
			if err := t.j.compute(t, sc); err != nil {
				fail(fmt.Errorf("%s: %w", in.path, err))
				return
			}
			track(sc.bytes() + slotBytes(t))
			inFree <- t.in
			t.in = nil
			select {
			case toWrite <- t:
			case <-stop:
				return
			}
		}
	}()

	// Writer (this goroutine).
	for t := range toWrite {
		stopped := false
		select {
		case <-stop:
			stopped = true
		default:
		}
		if !stopped {
			if err := writeChunk(w, t); err != nil {
				fail(err)
			} else {
				res.BytesWritten += t.values * 8
			}
		}
		outFree <- t.out
	}
	wg.Wait()
	res.Buffers = peak
	return firstErr
}

// slotBytes estimates the bytes held by all slots from the pair a chunk uses (slots grow
// to the largest chunk, so the others are at most as large).
func slotBytes(t *chunkTask) int64 {
	var b int64
	for _, x := range t.in.x {
		b += int64(cap(x)) * 8
	}
	b += int64(cap(t.in.mass)) * 8
	b += int64(cap(t.out.f64))*8 + int64(cap(t.out.f32))*4
	return b * slots
}

// readChunk reads the inputs (and measure) of a chunk, in the stored units.
func readChunk(in *inputFile, t *chunkTask) (int64, error) {
	j := t.j
	s := t.in
	if len(s.x) < len(j.inputs) {
		s.x = append(s.x, make([][]float64, len(j.inputs)-len(s.x))...)
	}
	var n int64
	for k, l := range j.inputs {
		start, count := t.slab(l.trailing()...)
		s.x[k] = growF(s.x[k], t.nr*l.ls*j.ns)
		if err := in.f.ReadFloat64s(l.name, start, count, s.x[k]); err != nil {
			return n, err
		}
		n += int64(len(s.x[k])) * int64(typeSize(l.v.Type))
	}
	if j.mass != nil && !j.op.isMeasure {
		start, count := t.slab(j.mass.trailing()...)
		s.mass = growF(s.mass, t.nr*j.mass.ls*j.ns)
		if err := in.f.ReadFloat64s(j.mass.name, start, count, s.mass); err != nil {
			return n, err
		}
		n += int64(len(s.mass)) * int64(typeSize(j.mass.v.Type))
	}
	return n, nil
}

// trailing returns the lengths of the level (if any) and horizontal dimensions.
func (l *fieldLayout) trailing() []int {
	if l.levDim != "" {
		return []int{l.ls, l.ns}
	}
	return []int{l.ns}
}

func typeSize(t ncio.Type) int {
	switch t {
	case ncio.Int8, ncio.Uint8, ncio.Char:
		return 1
	case ncio.Int16, ncio.Uint16:
		return 2
	case ncio.Int32, ncio.Uint32, ncio.Float32:
		return 4
	}
	return 8
}

// writeChunk writes a computed chunk.
func writeChunk(w *ncio.Writer, t *chunkTask) error {
	j := t.j
	var start, count []int
	if j.outLevDim != "" {
		start, count = t.slab(j.lt, j.nt)
	} else {
		start, count = t.slab(j.nt)
	}
	if j.outType == ncio.Float32 {
		return w.WriteFloat32s(j.out, start, count, t.out.f32)
	}
	return w.WriteFloat64s(j.out, start, count, t.out.f64)
}

// applyScratch holds the computer's work arrays, reused from chunk to chunk.
type applyScratch struct {
	workers               int
	y                     [][]float64 // per input: vertical result, nr × lt × ns
	mt, prod, den, lo, hi []float64
	mIn, mMid, mOut, mTmp []bool
	colX, colM, colY      []float64
	outF                  []float64
	anyMissing            bool
}

func (s *applyScratch) bytes() int64 {
	var b int64
	for _, y := range s.y {
		b += int64(cap(y)) * 8
	}
	for _, x := range [][]float64{s.mt, s.prod, s.den, s.lo, s.hi, s.colX, s.colM, s.colY, s.outF} {
		b += int64(cap(x)) * 8
	}
	for _, m := range [][]bool{s.mIn, s.mMid, s.mOut, s.mTmp} {
		b += int64(cap(m))
	}
	return b
}

// compute maps one chunk: unpack and find missing values, the vertical factor, the
// horizontal factor (summed over inputs; mass-weighted when the op has a measure), the
// fill values, the bounds, and the conversion to the output type.
func (j *job) compute(t *chunkTask, s *applyScratch) error {
	nr, ns, nt, ls, lt := t.nr, j.ns, j.nt, j.ls, j.lt
	w := s.workers
	nIn, nMid, nOut := nr*ls*ns, nr*lt*ns, nr*lt*nt
	var mass []float64
	if j.mass != nil {
		mass = t.in.mass
		if j.op.isMeasure {
			mass = t.in.x[0]
		}
	}

	// 1. Missing values and unpacking; bad measures spoil their columns.
	s.anyMissing = false
	var missingSrc int64
	for k, l := range j.inputs {
		x := t.in.x[k]
		has := anyMissing(x, l, w)
		if has {
			s.ensureMask(nIn)
		}
		if has || l.packed {
			missingSrc += s.markMissing(x, l, has, w)
		}
	}
	if mass != nil && !j.op.isMeasure {
		missingSrc += s.checkMass(mass, j.mass, nr, j.lm, ls, ns, nIn)
		if s.anyMissing && len(j.inputs) > 0 {
			// Values spoiled by the measure were not zeroed: zero them so sums stay finite.
			for k := range j.inputs {
				x := t.in.x[k]
				for i, m := range s.mIn {
					if m {
						x[i] = 0
					}
				}
			}
		}
	}
	j.stats.MissingSources += missingSrc

	// 2. Vertical factor.
	if len(s.y) < len(j.inputs) {
		s.y = append(s.y, make([][]float64, len(j.inputs)-len(s.y))...)
	}
	ys := make([][]float64, len(j.inputs))
	vo := j.op.vert
	for k := range j.inputs {
		x := t.in.x[k]
		switch {
		case j.op.isMeasure:
			if vo == nil {
				ys[k] = x
			} else {
				s.y[k] = growF(s.y[k], nMid)
				levelsTo(s.y[k], x, vo.vm.dstFrac, ns, nr, w)
				ys[k] = s.y[k]
			}
		case vo == nil || vo.identity:
			ys[k] = x
		case vo.massDep && mass != nil || vo.vm.W == nil:
			s.y[k] = growF(s.y[k], nMid)
			if err := j.columnsTo(s.y[k], x, mass, nr, s); err != nil {
				return err
			}
			ys[k] = s.y[k]
		default:
			s.y[k] = growF(s.y[k], nMid)
			levelsTo(s.y[k], x, vo.w, ns, nr, w)
			ys[k] = s.y[k]
		}
	}
	if s.anyMissing {
		if vo != nil && !vo.identity {
			s.mMid = growB(s.mMid, nMid)
			pattern := vo.w
			if j.op.isMeasure {
				pattern = vo.vm.dstFrac
			}
			spreadLevelsMaskTo(s.mMid, s.mIn, pattern, ns, nr)
		} else {
			s.mMid = growB(s.mMid, nMid)
			copy(s.mMid, s.mIn)
		}
	}

	// 3. Horizontal factor.
	var out []float64
	if j.outType == ncio.Float32 {
		s.outF = growF(s.outF, nOut)
		out = s.outF
	} else {
		t.out.f64 = growF(t.out.f64, nOut)
		out = t.out.f64
	}
	weighted := j.mass != nil && !j.op.isMeasure
	if weighted {
		// Target measures per source column, their product with the field, and the
		// mapped measure: q_t = H(m′q) / H(m′).
		s.mt = growF(s.mt, nMid)
		if vo == nil {
			copy(s.mt, mass)
		} else {
			levelsTo(s.mt, mass, vo.vm.dstFrac, ns, nr, w)
		}
		s.prod = growF(s.prod, nMid)
		y := ys[0]
		par.For(nMid, w, 1<<16, func(lo, hi int) {
			for i := lo; i < hi; i++ {
				s.prod[i] = s.mt[i] * y[i]
			}
		})
		MultiApplyTo(out, s.prod, j.h[0].W, nr*lt, false, w)
		s.den = growF(s.den, nOut)
		MultiApplyTo(s.den, s.mt, j.h[0].W, nr*lt, false, w)
	} else {
		for k := range j.inputs {
			MultiApplyTo(out, ys[k], j.h[k].W, nr*lt, k > 0, w)
		}
	}
	if s.anyMissing {
		s.mOut = growB(s.mOut, nOut)
		s.mTmp = growB(s.mTmp, nOut)
		for k := range j.h {
			dst := s.mOut
			if k > 0 {
				dst = s.mTmp
			}
			spreadMaskTo(dst, s.mMid, j.h[k].W, nr*lt, w)
			if k > 0 {
				for i, b := range s.mTmp {
					s.mOut[i] = s.mOut[i] || b
				}
			}
		}
	}
	if weighted {
		for i := range out {
			d := s.den[i]
			if d > 0 && !math.IsInf(d, 0) {
				out[i] /= d
			} else if !j.uncovered[i%nt] && !(s.anyMissing && s.mOut[i]) {
				// A map with negative weights can give a non-positive mapped measure.
				if !s.anyMissing {
					s.anyMissing = true
					s.mOut = growB(s.mOut, nOut)
					clear(s.mOut)
				}
				s.mOut[i] = true
			}
		}
	}

	// 4. Bounds (clip and assured sum) on each slice.
	if j.bounds {
		s.lo, s.hi = growF(s.lo, nOut), growF(s.hi, nOut)
		rowBoundsTo(s.lo, s.hi, ys[0], j.h[0].W, nr*lt, w)
		var mu sync.Mutex
		par.For(nr*lt, w, 1, func(a, b int) {
			wt := make([]float64, nt)
			act := make([]bool, nt)
			var clipped, infeasible int64
			for v := a; v < b; v++ {
				for i := range act {
					act[i] = !j.uncovered[i] && !(s.anyMissing && s.mOut[v*nt+i])
					wt[i] = j.tmeasure[i]
					if weighted {
						wt[i] *= s.den[v*nt+i]
					}
				}
				c, ok := clipAndAssuredSum(out[v*nt:(v+1)*nt], s.lo[v*nt:(v+1)*nt], s.hi[v*nt:(v+1)*nt], wt, act)
				clipped += int64(c)
				if !ok {
					infeasible++
				}
			}
			mu.Lock()
			j.stats.Clipped += clipped
			j.stats.Infeasible += infeasible
			mu.Unlock()
		})
	}

	// 5. Fill values and the output type.
	if err := j.finish(t, out, s); err != nil {
		return err
	}
	j.stats.Uncovered += int64(j.nUncovered) * int64(nr*lt)
	j.stats.Records += nr
	j.stats.Values += int64(nOut)
	t.values = int64(nOut)
	return nil
}

// finish writes the fill value into uncovered and spoiled targets and converts to the
// output type, in parallel over the slices of the chunk.
func (j *job) finish(t *chunkTask, out []float64, s *applyScratch) error {
	nt, nv := j.nt, t.nr*j.lt
	f32 := j.outType == ncio.Float32
	if f32 {
		t.out.f32 = growF32(t.out.f32, len(out))
	}
	var mu sync.Mutex
	var missing int64
	bad := -1
	par.For(nv, s.workers, 1, func(a, b int) {
		var miss int64
		firstBad := -1
		for v := a; v < b; v++ {
			o := out[v*nt : (v+1)*nt]
			for _, i := range j.uncoveredList {
				o[i] = j.fill
			}
			if s.anyMissing {
				for i, m := range s.mOut[v*nt : (v+1)*nt] {
					if m && !j.uncovered[i] {
						o[i] = j.fill
						miss++
					}
				}
			}
			if f32 {
				d := t.out.f32[v*nt : (v+1)*nt]
				for i, x := range o {
					if (x > math.MaxFloat32 || x < -math.MaxFloat32) && !math.IsInf(x, 0) && firstBad < 0 {
						firstBad = v*nt + i
					}
					d[i] = float32(x)
				}
			}
		}
		mu.Lock()
		missing += miss
		if firstBad >= 0 && (bad < 0 || firstBad < bad) {
			bad = firstBad
		}
		mu.Unlock()
	})
	j.stats.Missing += missing
	if bad >= 0 {
		return fmt.Errorf("variable %q: value %g does not fit the float32 output; use --type float64", j.out, out[bad])
	}
	return nil
}

// anyMissing reports whether x holds a missing value of layout l (a parallel read-only
// scan: missing values are rare, so this is the common path).
func anyMissing(x []float64, l *fieldLayout, workers int) bool {
	var found sync.Once
	hit := false
	par.For(len(x), workers, 1<<16, func(lo, hi int) {
		for _, v := range x[lo:hi] {
			if l.isMissing(v) {
				found.Do(func() { hit = true })
				return
			}
		}
	})
	return hit
}

// ensureMask allocates and clears the source mask on the first missing value of a chunk.
func (s *applyScratch) ensureMask(n int) {
	if !s.anyMissing {
		s.anyMissing = true
		s.mIn = growB(s.mIn, n)
		clear(s.mIn)
	}
}

// markMissing sets the missing values of x to zero and marks them in s.mIn (which
// ensureMask allocated if has is set), unpacks the others (scale_factor, add_offset), and
// returns how many were missing.
func (s *applyScratch) markMissing(x []float64, l *fieldLayout, has bool, workers int) int64 {
	var mu sync.Mutex
	var total int64
	par.For(len(x), workers, 1<<16, func(lo, hi int) {
		var n int64
		for i := lo; i < hi; i++ {
			v := x[i]
			if has && l.isMissing(v) {
				x[i] = 0
				s.mIn[i] = true
				n++
				continue
			}
			if l.packed {
				x[i] = v*l.scale + l.offset
			}
		}
		mu.Lock()
		total += n
		mu.Unlock()
	})
	return total
}

// checkMass unpacks the measure and, where a value is missing, not positive or not
// finite, sets it to 1 (a placeholder) and marks every level of that column of the field
// as missing. It returns the number of field values so spoiled.
func (s *applyScratch) checkMass(mass []float64, ml *fieldLayout, nr, lm, ls, ns, nIn int) int64 {
	bad := func(v float64) bool { return ml.isMissing(v) || !(v > 0) || math.IsInf(v, 0) }
	var found sync.Once
	hit := false
	par.For(len(mass), s.workers, 1<<16, func(lo, hi int) {
		for i := lo; i < hi; i++ {
			v := mass[i]
			if ml.isMissing(v) {
				found.Do(func() { hit = true })
				continue
			}
			if ml.packed {
				v = v*ml.scale + ml.offset
				mass[i] = v
			}
			if bad(v) {
				found.Do(func() { hit = true })
			}
		}
	})
	if !hit {
		return 0
	}
	s.ensureMask(nIn)
	var n int64
	for r := 0; r < nr; r++ {
		for k := 0; k < lm; k++ {
			row := mass[(r*lm+k)*ns : (r*lm+k+1)*ns]
			for c, v := range row {
				if !bad(v) {
					continue
				}
				row[c] = 1
				for q := 0; q < ls; q++ {
					if i := (r*ls+q)*ns + c; !s.mIn[i] {
						s.mIn[i] = true
						n++
					}
				}
			}
		}
	}
	return n
}

func growF32(b []float32, n int) []float32 {
	if cap(b) < n {
		return make([]float32, n)
	}
	return b[:n]
}

// columnsTo applies the vertical factor column by column with the columns' layer
// measures (VerticalMap.ApplyColumnsTo), one record at a time: the record is turned into
// level-fastest order and back.
func (j *job) columnsTo(dst, src, mass []float64, nr int, s *applyScratch) error {
	vm := j.op.vert.vm
	ns, ls, lt, lm := j.ns, j.ls, j.lt, j.lm
	s.colX = growF(s.colX, ns*ls)
	s.colY = growF(s.colY, ns*lt)
	var colM []float64
	if mass != nil {
		s.colM = growF(s.colM, ns*lm)
		colM = s.colM
	}
	for r := 0; r < nr; r++ {
		transposeTo(s.colX, src[r*ls*ns:(r+1)*ls*ns], ls, ns, s.workers)
		if mass != nil {
			transposeTo(colM, mass[r*lm*ns:(r+1)*lm*ns], lm, ns, s.workers)
		}
		if err := vm.ApplyColumnsTo(s.colY, s.colX, colM); err != nil {
			return fmt.Errorf("variable %q: %w", j.out, err)
		}
		transposeTo(dst[r*lt*ns:(r+1)*lt*ns], s.colY, ns, lt, s.workers)
	}
	return nil
}
