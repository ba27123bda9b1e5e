package weights

import (
	"bytes"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// randomCSR returns a random sparse matrix and its dense twin.
func randomCSR(rng *rand.Rand, rows, cols int, density float64) (*CSR, *mat.Dense) {
	var ts []Triplet
	d := mat.NewDense(max(rows, 1), max(cols, 1), nil)
	for i := 0; i < rows; i++ {
		for j := 0; j < cols; j++ {
			if rng.Float64() < density {
				v := rng.NormFloat64()
				ts = append(ts, Triplet{Row: int32(i), Col: int32(j), Value: v})
				d.Set(i, j, v)
			}
		}
	}
	rng.Shuffle(len(ts), func(a, b int) { ts[a], ts[b] = ts[b], ts[a] })
	return FromTriplets(rows, cols, ts), d
}

// TestCSRAgainstDense is an oracle test (STYLE.md habit 6): every operation against gonum's
// dense matrices, with NaN-filled destinations and reused buffers.
func TestCSRAgainstDense(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	// denseTol: the sparse and dense products add the same terms in possibly different
	// order; a few ulps of the row's absolute sum.
	const denseTol = 1e-13
	for _, sz := range [][2]int{{1, 1}, {7, 3}, {40, 60}, {300, 200}, {40000, 30}} {
		w, d := randomCSR(rng, sz[0], sz[1], 0.1)
		if err := w.Check(); err != nil {
			t.Fatal(err)
		}
		src := make([]float64, sz[1])
		dst := make([]float64, sz[0])
		for rep := 0; rep < 2; rep++ {
			for j := range src {
				src[j] = rng.NormFloat64()
			}
			for i := range dst {
				dst[i] = math.NaN()
			}
			srcCopy := append([]float64(nil), src...)
			w.ApplyTo(dst, src)
			var want mat.VecDense
			want.MulVec(d, mat.NewVecDense(len(src), src))
			for i := range dst {
				if math.Abs(dst[i]-want.AtVec(i)) > denseTol*(1+math.Abs(want.AtVec(i))) {
					t.Fatalf("%v: row %d: %v vs dense %v", sz, i, dst[i], want.AtVec(i))
				}
			}
			for j := range src {
				if src[j] != srcCopy[j] {
					t.Fatal("ApplyTo modified its input")
				}
			}
		}
		// Batched application equals one vector at a time.
		const nvec = 3
		bsrc := make([]float64, sz[1]*nvec)
		for j := range bsrc {
			bsrc[j] = rng.NormFloat64()
		}
		bdst := make([]float64, sz[0]*nvec)
		for i := range bdst {
			bdst[i] = math.NaN()
		}
		w.ApplyBatchTo(bdst, bsrc, nvec)
		for v := 0; v < nvec; v++ {
			one := make([]float64, sz[1])
			for j := range one {
				one[j] = bsrc[j*nvec+v]
			}
			w.ApplyTo(dst, one)
			for i := range dst {
				if math.Abs(dst[i]-bdst[i*nvec+v]) > denseTol*(1+math.Abs(dst[i])) {
					t.Fatalf("batch vector %d row %d: %v vs %v", v, i, bdst[i*nvec+v], dst[i])
				}
			}
		}
		// Transpose.
		tw := w.T()
		if err := tw.Check(); err != nil {
			t.Fatal(err)
		}
		for i := 0; i < min(sz[0], 50); i++ {
			for j := 0; j < sz[1]; j++ {
				if tw.At(j, i) != d.At(i, j) {
					t.Fatalf("transpose (%d,%d) = %v, want %v", j, i, tw.At(j, i), d.At(i, j))
				}
			}
		}
		// Product with the transpose against dense.
		if sz[0] <= 300 {
			p := Mul(w, tw)
			var dp mat.Dense
			dp.Mul(d, d.T())
			for i := 0; i < sz[0]; i++ {
				for j := 0; j < sz[0]; j++ {
					if math.Abs(p.At(i, j)-dp.At(i, j)) > denseTol*10 {
						t.Fatalf("product (%d,%d) = %v, want %v", i, j, p.At(i, j), dp.At(i, j))
					}
				}
			}
		}
	}
}

// TestApplyPanicsOnWrongLength: misuse is a programmer error (STYLE.md).
func TestApplyPanicsOnWrongLength(t *testing.T) {
	w := FromTriplets(2, 3, []Triplet{{0, 0, 1}})
	defer func() {
		if recover() == nil {
			t.Error("ApplyTo with a short dst did not panic")
		}
	}()
	w.ApplyTo(make([]float64, 1), make([]float64, 3))
}

// TestFromTripletsSumsDuplicates: duplicates add; the empty matrix is valid.
func TestFromTripletsSumsDuplicates(t *testing.T) {
	w := FromTriplets(2, 2, []Triplet{{1, 1, 2}, {0, 1, 1}, {1, 1, 3}, {1, 0, -1}})
	if w.NNZ() != 3 || w.At(1, 1) != 5 || w.At(0, 1) != 1 || w.At(1, 0) != -1 || w.At(0, 0) != 0 {
		t.Errorf("got %+v", w)
	}
	e := FromTriplets(3, 4, nil)
	if err := e.Check(); err != nil || e.NNZ() != 0 {
		t.Errorf("empty matrix: %v", err)
	}
}

// TestCompensatedSums: Neumaier summation recovers terms that naive summation loses
// (Higham, Accuracy and Stability of Numerical Algorithms, §4.3: common textbook example).
func TestCompensatedSums(t *testing.T) {
	xs := []float64{1e16, 1, -1e16, 1}
	if got := Sum(xs); got != 2 {
		t.Errorf("Sum = %v, want 2", got)
	}
	w := FromTriplets(3, 1, []Triplet{{0, 0, 1e16}, {1, 0, 1}, {2, 0, -1e16}})
	cs := make([]float64, 1)
	w.ColSumsTo(cs, nil)
	if cs[0] != 1 {
		t.Errorf("column sum %v, want 1", cs[0])
	}
	rs := make([]float64, 3)
	w.T().RowSumsTo(rs[:1])
	if rs[0] != 1 {
		t.Errorf("row sum %v, want 1", rs[0])
	}
}

// TestMatrixMarketRoundTrip: writing and reading back is exact (17 significant digits
// round-trip a float64: IEEE 754 §5.12.2).
func TestMatrixMarketRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	w, _ := randomCSR(rng, 57, 33, 0.2)
	var buf bytes.Buffer
	if err := WriteMatrixMarket(&buf, w, "a test matrix\nsecond line"); err != nil {
		t.Fatal(err)
	}
	r, err := ReadMatrixMarket(&buf)
	if err != nil {
		t.Fatal(err)
	}
	if r.Rows != w.Rows || r.Cols != w.Cols || r.NNZ() != w.NNZ() {
		t.Fatalf("size %d×%d/%d, want %d×%d/%d", r.Rows, r.Cols, r.NNZ(), w.Rows, w.Cols, w.NNZ())
	}
	for k := range w.Values {
		if r.Values[k] != w.Values[k] || r.ColIndex[k] != w.ColIndex[k] {
			t.Fatalf("entry %d differs", k)
		}
	}
}

// TestMatrixMarketForms reads the variants the format defines (NIST Matrix Market
// specification: pattern, integer, symmetric) and rejects bad input with the line.
func TestMatrixMarketForms(t *testing.T) {
	cases := []struct {
		name, in string
		check    func(*CSR) bool
		errPart  string
	}{
		{"pattern", "%%MatrixMarket matrix coordinate pattern general\n2 2 2\n1 1\n2 1\n", func(w *CSR) bool { return w.At(1, 0) == 1 && w.NNZ() == 2 }, ""},
		{"symmetric", "%%MatrixMarket matrix coordinate real symmetric\n% c\n3 3 2\n1 1 2.5\n3 1 -1\n", func(w *CSR) bool { return w.At(0, 2) == -1 && w.At(2, 0) == -1 && w.At(0, 0) == 2.5 }, ""},
		{"integer", "%%MatrixMarket matrix coordinate integer general\n1 2 1\n1 2 7\n", func(w *CSR) bool { return w.At(0, 1) == 7 }, ""},
		{"bad header", "hello\n", nil, "line 1"},
		{"array", "%%MatrixMarket matrix array real general\n1 1\n1\n", nil, "coordinate"},
		{"index range", "%%MatrixMarket matrix coordinate real general\n2 2 1\n3 1 1\n", nil, "line 3"},
		{"short", "%%MatrixMarket matrix coordinate real general\n2 2 2\n1 1 1\n", nil, "1 of 2"},
		{"nan", "%%MatrixMarket matrix coordinate real general\n2 2 1\n1 1 nan\n", nil, "bad value"},
		{"huge", "%%MatrixMarket matrix coordinate real general\n2 2 99999999999\n", nil, "out of range"},
	}
	for _, tc := range cases {
		w, err := ReadMatrixMarket(strings.NewReader(tc.in))
		if tc.errPart != "" {
			if err == nil || !strings.Contains(err.Error(), tc.errPart) {
				t.Errorf("%s: error %v, want one mentioning %q", tc.name, err, tc.errPart)
			}
			continue
		}
		if err != nil || !tc.check(w) {
			t.Errorf("%s: %v %+v", tc.name, err, w)
		}
	}
}

// FuzzReadMatrixMarket: the reader never panics, and what it accepts is a valid matrix.
func FuzzReadMatrixMarket(f *testing.F) {
	f.Add("%%MatrixMarket matrix coordinate real general\n2 2 2\n1 1 1.5\n2 1 -3\n")
	f.Add("%%MatrixMarket matrix coordinate pattern symmetric\n3 3 1\n3 1\n")
	f.Fuzz(func(t *testing.T, in string) {
		w, err := ReadMatrixMarket(strings.NewReader(in))
		if err != nil {
			return
		}
		if err := w.Check(); err != nil {
			t.Fatalf("accepted an invalid matrix: %v", err)
		}
	})
}
