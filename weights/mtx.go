package weights

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
)

// WriteMatrixMarket writes w in the Matrix Market exchange format (NIST; "coordinate real
// general"): a header line, comment lines (each of comments prefixed with %), the size
// line "rows cols entries" and one "i j value" line per entry with 1-based indices and
// values printed with 17 significant digits, so reading back is exact.
func WriteMatrixMarket(out io.Writer, w *CSR, comments ...string) error {
	bw := bufio.NewWriterSize(out, 1<<20)
	fmt.Fprintln(bw, "%%MatrixMarket matrix coordinate real general")
	for _, c := range comments {
		for _, line := range strings.Split(c, "\n") {
			fmt.Fprintf(bw, "%% %s\n", line)
		}
	}
	fmt.Fprintf(bw, "%d %d %d\n", w.Rows, w.Cols, w.NNZ())
	buf := make([]byte, 0, 64)
	for i := 0; i < w.Rows; i++ {
		for k := w.RowStart[i]; k < w.RowStart[i+1]; k++ {
			buf = buf[:0]
			buf = strconv.AppendInt(buf, int64(i+1), 10)
			buf = append(buf, ' ')
			buf = strconv.AppendInt(buf, int64(w.ColIndex[k])+1, 10)
			buf = append(buf, ' ')
			buf = strconv.AppendFloat(buf, w.Values[k], 'g', 17, 64)
			buf = append(buf, '\n')
			bw.Write(buf)
		}
	}
	return bw.Flush()
}

// MaxMatrixMarketEntries bounds the entries a Matrix Market header may announce, so a
// corrupt header cannot make the reader allocate without limit (2³¹ − 1 entries is far
// beyond any coupling matrix).
const MaxMatrixMarketEntries = math.MaxInt32

// ReadMatrixMarket reads a sparse matrix in Matrix Market coordinate format: field real,
// integer or pattern (pattern entries are 1), symmetry general, symmetric or
// skew-symmetric (the mirrored entries are added). Rows are targets and columns sources,
// 1-based as the format requires. Duplicate entries are summed. Errors name the line.
func ReadMatrixMarket(r io.Reader) (*CSR, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 1<<16), 1<<20)
	line := 0
	next := func() (string, bool) {
		for sc.Scan() {
			line++
			s := strings.TrimSpace(sc.Text())
			if s == "" || (line > 1 && strings.HasPrefix(s, "%")) {
				continue
			}
			return s, true
		}
		return "", false
	}
	head, ok := next()
	if !ok {
		if err := sc.Err(); err != nil {
			return nil, fmt.Errorf("matrix market: %w", err)
		}
		return nil, fmt.Errorf("matrix market: empty input")
	}
	f := strings.Fields(strings.ToLower(head))
	if len(f) != 5 || f[0] != "%%matrixmarket" || f[1] != "matrix" {
		return nil, fmt.Errorf("matrix market: line 1: not a Matrix Market header: %q", head)
	}
	if f[2] != "coordinate" {
		return nil, fmt.Errorf("matrix market: line 1: format %q not supported (want coordinate)", f[2])
	}
	field, sym := f[3], f[4]
	switch field {
	case "real", "integer", "pattern", "double":
	default:
		return nil, fmt.Errorf("matrix market: line 1: field %q not supported (want real, integer or pattern)", field)
	}
	switch sym {
	case "general", "symmetric", "skew-symmetric":
	default:
		return nil, fmt.Errorf("matrix market: line 1: symmetry %q not supported", sym)
	}
	size, ok := next()
	if !ok {
		return nil, fmt.Errorf("matrix market: missing size line")
	}
	sf := strings.Fields(size)
	if len(sf) != 3 {
		return nil, fmt.Errorf("matrix market: line %d: size line needs rows, columns and entries: %q", line, size)
	}
	var dims [3]int64
	for i, s := range sf {
		v, err := strconv.ParseInt(s, 10, 64)
		if err != nil || v < 0 {
			return nil, fmt.Errorf("matrix market: line %d: bad size %q", line, s)
		}
		dims[i] = v
	}
	rows, cols, nnz := dims[0], dims[1], dims[2]
	if rows > math.MaxInt32 || cols > math.MaxInt32 || nnz > MaxMatrixMarketEntries || (rows*cols > 0 && nnz > rows*cols) {
		return nil, fmt.Errorf("matrix market: line %d: size %d × %d with %d entries is out of range", line, rows, cols, nnz)
	}
	ts := make([]Triplet, 0, min(nnz, 1<<20))
	for n := int64(0); n < nnz; n++ {
		s, ok := next()
		if !ok {
			if err := sc.Err(); err != nil {
				return nil, fmt.Errorf("matrix market: line %d: %w", line, err)
			}
			return nil, fmt.Errorf("matrix market: file ends after %d of %d entries", n, nnz)
		}
		ef := strings.Fields(s)
		want := 3
		if field == "pattern" {
			want = 2
		}
		if len(ef) != want {
			return nil, fmt.Errorf("matrix market: line %d: want %d fields, have %q", line, want, s)
		}
		i, err1 := strconv.ParseInt(ef[0], 10, 64)
		j, err2 := strconv.ParseInt(ef[1], 10, 64)
		if err1 != nil || err2 != nil || i < 1 || i > rows || j < 1 || j > cols {
			return nil, fmt.Errorf("matrix market: line %d: index (%s, %s) outside 1..%d × 1..%d", line, ef[0], ef[1], rows, cols)
		}
		v := 1.0
		if field != "pattern" {
			var err error
			v, err = strconv.ParseFloat(ef[2], 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("matrix market: line %d: bad value %q", line, ef[2])
			}
		}
		ts = append(ts, Triplet{Row: int32(i - 1), Col: int32(j - 1), Value: v})
		if sym != "general" && i != j {
			mv := v
			if sym == "skew-symmetric" {
				mv = -v
			}
			if j > rows || i > cols {
				return nil, fmt.Errorf("matrix market: line %d: symmetric matrix must be square", line)
			}
			ts = append(ts, Triplet{Row: int32(j - 1), Col: int32(i - 1), Value: mv})
		}
	}
	return FromTriplets(int(rows), int(cols), ts), nil
}

// WriteMatrixMarketFile writes w to path in Matrix Market form through a temporary file in
// the same directory, renamed when complete.
func WriteMatrixMarketFile(path string, w *CSR, comments ...string) error {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	if err := WriteMatrixMarket(f, w, comments...); err != nil {
		f.Close()
		os.Remove(f.Name())
		return fmt.Errorf("%s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		os.Remove(f.Name())
		return fmt.Errorf("%s: %w", path, err)
	}
	if err := os.Rename(f.Name(), path); err != nil {
		os.Remove(f.Name())
		return err
	}
	return nil
}
