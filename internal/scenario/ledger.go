package scenario

import (
	"fmt"
	"io"
	"math"
	"text/tabwriter"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
	"github.com/colbridge/colbridge/remap"
	"github.com/colbridge/colbridge/weights"
)

// LedgerRow is one quantity at one time, integrated on both sides of a coupling step.
type LedgerRow struct {
	Hour     float64
	Quantity string
	Unit     string
	Step     string  // "restriction" (dynamics → columns) or "prolongation" (columns → dynamics)
	Before   float64 // on the side the step starts from
	After    float64 // on the side it ends on
	// Exact says whether the step is built to keep the quantity (conservative maps,
	// adjoint prolongation); otherwise the change is what the map does to it.
	Exact bool
	Note  string
}

// Change returns (After − Before)/|Before|.
func (r LedgerRow) Change() float64 {
	if r.Before == 0 {
		return r.After
	}
	return (r.After - r.Before) / math.Abs(r.Before)
}

// files of one demo run
type ledgerFiles struct {
	dynState, colState, colIncr, dynIncr string
}

// Ledger integrates, at every time of the day, the quantities a coupler must account
// for on both sides of each step:
//
//   - restriction: air mass Σ A Σ ρΔz, tracer mass Σ A Σ q m (m the layer mass) — kept by
//     the conservative maps — and wind energy ½ Σ μ Σ u²Δz on the edges against
//     ½ Σ A Σ (u_e² + u_n²)Δz on the columns — not kept: the coarser columns hold less;
//   - prolongation: the heat-content integral of the θ increment, Σ A Σ Δθ Δz on the
//     columns against Σ A Σ Δθ w on the dynamics interfaces (w the dual-layer thickness),
//     kept exactly by the adjoint; the drag work Σ A Σ (u_e δu_e + u_n δu_n)Δz against
//     Σ μ Σ u δu Δz on the edges, which only an adjoint prolongation keeps exactly (the
//     demo's plan averages winds back because the cubed sphere's edges are skewed).
//
// μ_e is the kinetic-energy edge measure of remap.EdgeMeasure, A the cell areas.
func Ledger(f ledgerFiles, dyn, cols *grids.Mesh, lev *grids.Levels) ([]LedgerRow, error) {
	nl := lev.NLev()
	dz := lev.Thicknesses()
	wi := remap.VolumeMeasures(lev, grids.Interface)
	mu := remap.EdgeMeasure(dyn)
	rd, err := openAll(f.dynState, f.colState, f.colIncr, f.dynIncr)
	if err != nil {
		return nil, err
	}
	defer rd.close()
	ds, cs, ci, di := rd.files[0], rd.files[1], rd.files[2], rd.files[3]
	nd, nc, ne := dyn.NumCells(), cols.NumCells(), dyn.NumEdges()
	get := func(f *ncio.File, name string, per int) []float64 {
		if err != nil {
			return nil
		}
		var x []float64
		x, err = readAll(f, name, per)
		return x
	}
	dRho, dMass, dQ, dU := get(ds, "air_density", nl*nd), get(ds, "layer_mass", nl*nd), get(ds, "tracer", nl*nd), get(ds, "u", nl*ne)
	cRho, cMass, cQ := get(cs, "air_density", nl*nc), get(cs, "layer_mass", nl*nc), get(cs, "tracer", nl*nc)
	cUe, cUn := get(cs, "u_east", nl*nc), get(cs, "u_north", nl*nc)
	iTh, iUe, iUn := get(ci, "theta", nl*nc), get(ci, "u_east", nl*nc), get(ci, "u_north", nl*nc)
	pTh, pU := get(di, "theta", (nl+1)*nd), get(di, "u", nl*ne)
	if err != nil {
		return nil, err
	}
	nt := len(dRho) / (nl * nd)
	var rows []LedgerRow
	for t := 0; t < nt && t < len(Hours); t++ {
		h := Hours[t]
		sum := func(n, levels int, term func(k, i int) float64) float64 {
			var a weights.Accumulator
			for k := 0; k < levels; k++ {
				for i := 0; i < n; i++ {
					a.Add(term(k, i))
				}
			}
			return a.Sum()
		}
		at := func(x []float64, levels, n, k, i int) float64 { return x[(t*levels+k)*n+i] }
		rows = append(rows,
			LedgerRow{Hour: h, Quantity: "air mass", Unit: "kg", Step: "restriction", Exact: true,
				Before: sum(nd, nl, func(k, i int) float64 { return dyn.CellArea[i] * at(dRho, nl, nd, k, i) * dz[k] }),
				After:  sum(nc, nl, func(k, i int) float64 { return cols.CellArea[i] * at(cRho, nl, nc, k, i) * dz[k] })},
			LedgerRow{Hour: h, Quantity: "tracer mass", Unit: "kg", Step: "restriction", Exact: true,
				Before: sum(nd, nl, func(k, i int) float64 { return dyn.CellArea[i] * at(dQ, nl, nd, k, i) * at(dMass, nl, nd, k, i) }),
				After:  sum(nc, nl, func(k, i int) float64 { return cols.CellArea[i] * at(cQ, nl, nc, k, i) * at(cMass, nl, nc, k, i) })},
			LedgerRow{Hour: h, Quantity: "wind energy", Unit: "m5 s-2", Step: "restriction", Note: "coarser columns hold less",
				Before: sum(ne, nl, func(k, e int) float64 { u := at(dU, nl, ne, k, e); return 0.5 * mu[e] * u * u * dz[k] }),
				After: sum(nc, nl, func(k, i int) float64 {
					a, b := at(cUe, nl, nc, k, i), at(cUn, nl, nc, k, i)
					return 0.5 * cols.CellArea[i] * (a*a + b*b) * dz[k]
				})},
			LedgerRow{Hour: h, Quantity: "θ increment", Unit: "K m3", Step: "prolongation", Exact: true,
				Before: sum(nc, nl, func(k, i int) float64 { return cols.CellArea[i] * at(iTh, nl, nc, k, i) * dz[k] }),
				After:  sum(nd, nl+1, func(k, i int) float64 { return dyn.CellArea[i] * at(pTh, nl+1, nd, k, i) * wi[k] })},
			LedgerRow{Hour: h, Quantity: "drag work", Unit: "m5 s-2", Step: "prolongation", Note: "averaged, not adjoint",
				Before: sum(nc, nl, func(k, i int) float64 {
					return cols.CellArea[i] * (at(cUe, nl, nc, k, i)*at(iUe, nl, nc, k, i) + at(cUn, nl, nc, k, i)*at(iUn, nl, nc, k, i)) * dz[k]
				}),
				After: sum(ne, nl, func(k, e int) float64 { return mu[e] * at(dU, nl, ne, k, e) * at(pU, nl, ne, k, e) * dz[k] })},
		)
	}
	return rows, nil
}

type openFiles struct{ files []*ncio.File }

func openAll(paths ...string) (*openFiles, error) {
	o := &openFiles{}
	for _, p := range paths {
		f, err := ncio.Open(p)
		if err != nil {
			o.close()
			return nil, err
		}
		o.files = append(o.files, f)
	}
	return o, nil
}

func (o *openFiles) close() {
	for _, f := range o.files {
		f.Close()
	}
}

// WriteLedger prints the ledger as an aligned table: one block per time, one line per
// quantity with both integrals and the relative change.
func WriteLedger(w io.Writer, rows []LedgerRow) error {
	fmt.Fprintln(w, "conservation ledger — relative change = (after − before)/|before|")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "time\tquantity\tstep\tbefore\tafter\tchange\t\t")
	last := -1.0
	for _, r := range rows {
		tm := ""
		if r.Hour != last {
			tm = fmt.Sprintf("%02.0f:00", r.Hour)
			last = r.Hour
		}
		kind := "kept"
		if !r.Exact {
			kind = r.Note
		}
		fmt.Fprintf(tw, "%s\t%s [%s]\t%s\t%.10e\t%.10e\t%+.2e\t%s\t\n", tm, r.Quantity, r.Unit, r.Step, r.Before, r.After, r.Change(), kind)
	}
	return tw.Flush()
}
