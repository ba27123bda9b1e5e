package ncio

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// TestBlocks checks the splitting of hyperslabs into pieces against a
// plain enumeration: every element exactly once, in row-major order, no
// piece larger than maxN. Random shapes from a fixed seed.
func TestBlocks(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := range 500 {
		r := rng.IntN(5)
		start := make([]int, r)
		count := make([]int, r)
		n := 1
		for i := range r {
			start[i] = rng.IntN(4)
			count[i] = 1 + rng.IntN(7)
			n *= count[i]
		}
		maxN := 1 + rng.IntN(40)
		var got [][]int
		off := 0
		err := blocks(start, count, n, maxN, func(bs, bc []int, o, m int) error {
			if o != off {
				t.Fatalf("trial %d: piece at offset %d, want %d", trial, o, off)
			}
			pm := 1
			for _, c := range bc {
				pm *= c
			}
			if pm != m || (m > maxN && r > 0) {
				t.Fatalf("trial %d: piece %v of %d values claims %d (max %d)", trial, bc, pm, m, maxN)
			}
			got = append(got, box(bs, bc)...)
			off += m
			return nil
		})
		check(t, err)
		want := box(start, count)
		if !slices.EqualFunc(got, want, slices.Equal) {
			t.Fatalf("trial %d: start %v count %v maxN %d: pieces cover\n%v\nwant\n%v", trial, start, count, maxN, got, want)
		}
	}
}

// box lists the indices of a hyperslab in row-major order.
func box(start, count []int) [][]int {
	n := 1
	for _, c := range count {
		n *= c
	}
	out := make([][]int, 0, n)
	idx := make([]int, len(count))
	for range n {
		p := make([]int, len(idx))
		for i := range idx {
			p[i] = start[i] + idx[i]
		}
		out = append(out, p)
		for i := len(idx) - 1; i >= 0; i-- {
			idx[i]++
			if idx[i] < count[i] {
				break
			}
			idx[i] = 0
		}
	}
	return out
}

// TestResolve: nil start/count and the unlimited dimension when writing.
func TestResolve(t *testing.T) {
	s := shape{dims: []string{"t", "n"}, lens: []int{2, 5}, unlimited: []bool{true, false}}
	cases := []struct {
		start, count []int
		growing      bool
		st, ct       []int
		n            int
		ok           bool
	}{
		{nil, nil, false, []int{0, 0}, []int{2, 5}, 10, true},
		{[]int{1, 2}, nil, false, []int{1, 2}, []int{1, 3}, 3, true},
		{nil, []int{1, 1}, false, []int{0, 0}, []int{1, 1}, 1, true},
		{[]int{2, 0}, []int{1, 5}, false, nil, nil, 0, false}, // reading past the records
		{[]int{2, 0}, []int{1, 5}, true, []int{2, 0}, []int{1, 5}, 5, true},
		{[]int{9, 0}, []int{3, 5}, true, []int{9, 0}, []int{3, 5}, 15, true},
		{[]int{0, 4}, []int{1, 2}, true, nil, nil, 0, false}, // fixed dimension still bounded
		{[]int{2, 5}, nil, true, []int{2, 5}, []int{0, 0}, 0, true},
	}
	for i, c := range cases {
		st, ct, n, kind, msg := s.resolve(c.start, c.count, c.growing)
		if ok := kind == nil; ok != c.ok || ok && (!slices.Equal(st, c.st) || !slices.Equal(ct, c.ct) || n != c.n) {
			t.Errorf("case %d: got %v %v %d %v %q", i, st, ct, n, kind, msg)
		}
	}
}
