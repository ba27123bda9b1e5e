package ncio

import (
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// These tests check our files with the NetCDF tools (ncdump, ncgen from
// netcdf-bin), an implementation outside this project, and read files
// those tools wrote.

func needTool(t *testing.T, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		t.Skipf("%s is not on PATH (Debian package netcdf-bin); skipping the check against it", name)
	}
	return p
}

// TestNcdumpHeader writes a file with every feature and checks the header
// ncdump prints. Expected lines follow the CDL syntax of the NetCDF Users
// Guide ("CDL Syntax": type suffixes f, s, b, UB, US, U, LL, ULL;
// "UNLIMITED ; // (N currently)"; "string" attributes) and the special
// virtual attributes ncdump -s shows (_Storage, _ChunkSizes,
// _DeflateLevel, _Shuffle; NUG "Special attributes").
func TestNcdumpHeader(t *testing.T) {
	ncdump := needTool(t, "ncdump")
	p := tempFile(t, "dump.nc")
	w, err := Create(p, CreateOptions{})
	check(t, err)
	defer w.Abort()
	check(t, w.DefDim("time", 0))
	check(t, w.DefDim("nCells", 4))
	check(t, w.DefVar("u", Float32, []string{"time", "nCells"}))
	check(t, w.PutAttrFloat64s("u", "_FillValue", -999))
	check(t, w.PutAttrText("u", "units", "m s-1"))
	check(t, w.SetDeflate("u", 4, true))
	check(t, w.SetChunking("u", []int{1, 4}))
	check(t, w.DefVar("mask", Uint8, []string{"nCells"}))
	check(t, w.PutAttrFloat64s("mask", "valid_range", 0, 1))
	check(t, w.DefVar("id", Int64, []string{"nCells"}))
	check(t, w.PutAttrInt64s("id", "_FillValue", -1))
	check(t, w.PutAttrStrings("", "names", "alpha", "beta"))
	check(t, w.PutAttrInt32s("", "version", 1, 2))
	check(t, w.PutAttrFloat64s("", "radius", 6.37122e6))
	check(t, w.EndDef())
	for r := range 3 {
		check(t, w.WriteFloat64s("u", []int{r, 0}, []int{1, 4}, []float64{1, 2, 3, 4}))
	}
	check(t, w.Commit())

	out, err := exec.Command(ncdump, "-h", "-s", p).CombinedOutput()
	if err != nil {
		t.Fatalf("ncdump: %v\n%s", err, out)
	}
	lines := strings.Split(string(out), "\n")
	for i := range lines {
		lines[i] = strings.TrimSpace(lines[i])
	}
	want := []string{
		"time = UNLIMITED ; // (3 currently)",
		"nCells = 4 ;",
		"float u(time, nCells) ;",
		"u:_FillValue = -999.f ;",
		`u:units = "m s-1" ;`,
		`u:_Storage = "chunked" ;`,
		"u:_ChunkSizes = 1, 4 ;",
		"u:_DeflateLevel = 4 ;",
		`u:_Shuffle = "true" ;`,
		"ubyte mask(nCells) ;",
		"mask:valid_range = 0UB, 1UB ;",
		"int64 id(nCells) ;",
		"id:_FillValue = -1LL ;",
		`string :names = "alpha", "beta" ;`,
		":version = 1, 2 ;",
		":radius = 6371220. ;",
		`:_Format = "netCDF-4" ;`,
	}
	for _, l := range want {
		if !slices.Contains(lines, l) {
			t.Errorf("ncdump -h -s lacks %q; got:\n%s", l, out)
		}
	}
}

// TestNcdumpClassic: a Classic64 file is what ncdump -k calls "64-bit
// offset", and ncdump prints the data we wrote.
func TestNcdumpClassic(t *testing.T) {
	ncdump := needTool(t, "ncdump")
	p := tempFile(t, "c.nc")
	sample{format: Classic64, nRec: 2}.write(t, p)
	out, err := exec.Command(ncdump, "-k", p).CombinedOutput()
	if err != nil || strings.TrimSpace(string(out)) != "64-bit offset" {
		t.Errorf("ncdump -k: %q, %v", out, err)
	}
	out, err = exec.Command(ncdump, "-v", "rec,v_short", p).CombinedOutput()
	if err != nil {
		t.Fatalf("ncdump: %v\n%s", err, out)
	}
	text := strings.Join(strings.Fields(string(out)), " ")
	for _, want := range []string{
		"rec = 0, 0.5, -0.25, 1, 0.5, -0.25 ;",
		"v_short = 0, 1, 2, 3, 4, 100 ;",
		"short v_short(two, nCells) ;",
		"v_short:_FillValue = 7s ;",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("ncdump output lacks %q:\n%s", want, out)
		}
	}
}

// testCDL is read back after ncgen turns it into each binary format.
const testCDL = `netcdf gen {
dimensions:
	t = UNLIMITED ;
	n = 3 ;
variables:
	double x(t, n) ;
		x:units = "K" ;
		x:_FillValue = -1. ;
	short s(n) ;
		s:scale_factor = 0.5f ;
	int c ;
data:
	x = 1, 2, 3, 4, 5, 6 ;
	s = -2, 0, 7 ;
	c = 42 ;
}
`

// TestReadNcgen reads files that ncgen (the reference CDL compiler)
// writes in every binary format it knows, including CDF-5, which checks
// our classic header walk against files we did not write.
func TestReadNcgen(t *testing.T) {
	ncgen := needTool(t, "ncgen")
	dir := t.TempDir()
	cdl := filepath.Join(dir, "gen.cdl")
	check(t, os.WriteFile(cdl, []byte(testCDL), 0o600))
	for _, kind := range []string{"classic", "64-bit offset", "cdf5", "netCDF-4", "netCDF-4 classic model"} {
		t.Run(kind, func(t *testing.T) {
			p := filepath.Join(dir, strings.ReplaceAll(kind, " ", "_")+".nc")
			if out, err := exec.Command(ncgen, "-k", kind, "-o", p, cdl).CombinedOutput(); err != nil {
				t.Fatalf("ncgen -k %q: %v\n%s", kind, err, out)
			}
			f, err := Open(p)
			check(t, err)
			defer f.Close()
			d, err := f.Dim("t")
			if err != nil || !d.Unlimited || d.Len != 2 {
				t.Errorf("dimension t: %+v, %v", d, err)
			}
			x := make([]float64, 6)
			check(t, f.ReadFloat64s("x", nil, nil, x))
			if !slices.Equal(x, []float64{1, 2, 3, 4, 5, 6}) {
				t.Errorf("x = %v", x)
			}
			s := make([]int32, 3)
			check(t, f.ReadInt32s("s", nil, nil, s))
			if !slices.Equal(s, []int32{-2, 0, 7}) {
				t.Errorf("s = %v", s)
			}
			c := make([]int64, 1)
			check(t, f.ReadInt64s("c", nil, nil, c))
			if c[0] != 42 {
				t.Errorf("c = %v", c)
			}
			if u, err := f.AttrText("x", "units"); u != "K" || err != nil {
				t.Errorf("units %q, %v", u, err)
			}
			if fv, ok, err := f.FillValue("x"); fv != -1 || !ok || err != nil {
				t.Errorf("fill %v %v %v", fv, ok, err)
			}
			if sf, err := f.AttrFloat64s("s", "scale_factor"); err != nil || !slices.Equal(sf, []float64{0.5}) {
				t.Errorf("scale_factor %v, %v", sf, err)
			}
		})
	}
}
