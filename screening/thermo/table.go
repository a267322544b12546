// Package thermo estimates the thermodynamics of ring-opening metathesis polymerization from
// structure (ring-system strain table, gas-phase ring corrections, condensed-phase offsets,
// substituent corrections) and evaluates them at the conditions (ΔG_p, T_c, [M]eq, sweeps).
package thermo

import (
	"embed"
	"encoding/csv"
	"fmt"
	"math"
	"ringsieve/screening/canon"
	"sort"
	"strconv"
	"strings"
	"sync"

	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
	"ringsieve/screening/smiles"
	"ringsieve/screening/units"
)

// Thermodynamics of ring-opening metathesis polymerization from structure.
//
// Gas phase (Benson group additivity): in ring-opening metathesis every atom keeps its
// neighbour types, so the group values of monomer and repeat unit cancel and only ring
// corrections remain (Benson, Thermochemical Kinetics, 2nd ed., Wiley 1976):
//
//	ΔH_gas = −RSC_H(monomer ring system) + Σ RSC_H(rings surviving in the repeat unit)
//	ΔS_gas = −RSC_S(monomer ring system) + Σ RSC_S(surviving rings) + R ln σ(monomer)
//
// (σ: symmetry number of the monomer; the repeat unit of a long chain has none). The polymer's
// olefin is taken as trans, so no cis correction enters.
//
// Condensed phase, 1 mol/L standard state: ΔH_p = ΔH_gas + δH, ΔS_p° = ΔS_gas + δS, with the
// offsets δH, δS the mean residuals over the measured values in data/condensed_fit.csv (their
// sources are on each row); fitOffsets recomputes them and the tests check the result.

//go:embed data/ring_table.csv data/condensed_fit.csv data/measured.csv data/ff_measured.csv data/precomputed.tsv
var dataFS embed.FS

// RingRow is one row of the ring-system strain table.
type RingRow struct {
	Name     string
	SMILES   string
	Trans    bool
	RSCH     float64 // kJ/mol
	RSCS     float64 // J/(mol K)
	Sigma    int
	UH, US   float64
	AnchorDH *float64 // measured condensed-phase ΔH_p of the parent, kJ/mol
	AnchorDS *float64 // measured ΔS_p°, J/(mol K)
	AnchorUH float64
	AnchorUS float64
	Evidence string
	Source   string
	Note     string
	Key      string
	Rings    int // rings in the row's system

	constKey string // constitution key of the row's SMILES (to leave its own measurement out)
	atoms    int    // ring atoms of the row's system

	// texts of an estimate anchored on the row's measurement, written once when the table loads
	anchorSource string // the estimate's source
	anchorNote   string // the measured_parent note
}

type ringTable struct {
	rows  []*RingRow
	byKey map[string]*RingRow
	// maxAtoms is the atom count of the table's largest ring system: larger systems cannot
	// match a row, so their canonical keys (the costly step for big fused systems) are skipped.
	maxAtoms int
	// offsets fitted on the measured values
	OffsetH, OffsetHU float64
	OffsetS, OffsetSU float64
	fitRows           []FitRow

	offMu    sync.Mutex
	offCache map[string][4]float64 // offsets refitted without one constitution's rows
}

// FitRow is one measured value of data/condensed_fit.csv with the estimator's gas-phase value.
type FitRow struct {
	ID, SMILES, Kind, Source string
	DHMeasured               float64
	DSMeasured               *float64
	DHGas, DSGas             float64

	constKey string
}

var (
	tableOnce sync.Once
	table     *ringTable
	tableErr  error
)

// Table returns the embedded ring-system table, loading it once. A load failure is a build
// defect and panics at first use in tests; callers get the error from TableErr.
func Table() *ringTable {
	tableOnce.Do(func() { table, tableErr = loadTable(embeddedPrecomputed()) })
	if tableErr != nil {
		panic(tableErr)
	}
	return table
}

// TableRows returns the rows of the strain table (for listing and documentation).
func TableRows() []*RingRow { return Table().rows }

// Offsets returns the fitted condensed-phase offsets and their standard deviations:
// δH (kJ/mol), u(δH), δS (J/(mol K)), u(δS).
func Offsets() (dh, udh, ds, uds float64) {
	t := Table()
	return t.OffsetH, t.OffsetHU, t.OffsetS, t.OffsetSU
}

// FitData returns the measured rows used for the offsets with the gas-phase estimate of each.
func FitData() []FitRow { return append([]FitRow(nil), Table().fitRows...) }

func readCSV(name string) ([][]string, error) {
	f, err := dataFS.Open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	r.FieldsPerRecord = -1
	recs, err := r.ReadAll()
	if err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	return recs, nil
}

func optFloat(s string) (*float64, error) {
	if strings.TrimSpace(s) == "" {
		return nil, nil
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return nil, err
	}
	return &v, nil
}

// loadTable builds the table from the embedded CSV files; what pre holds (keys, fit estimates)
// is taken from it instead of being computed (nil: compute everything).
func loadTable(pre *precomputed) (*ringTable, error) {
	recs, err := readCSV("data/ring_table.csv")
	if err != nil {
		return nil, err
	}
	t := &ringTable{byKey: map[string]*RingRow{}}
	for i, rec := range recs {
		if i == 0 {
			continue // header
		}
		if len(rec) != 15 {
			return nil, fmt.Errorf("ring_table.csv row %d: %d fields, want 15", i, len(rec))
		}
		num := func(j int) (float64, error) { return strconv.ParseFloat(rec[j], 64) }
		row := &RingRow{Name: rec[0], SMILES: rec[1], Trans: rec[2] == "1", Evidence: rec[12], Source: rec[13], Note: rec[14]}
		var errs [6]error
		row.RSCH, errs[0] = num(3)
		row.RSCS, errs[1] = num(4)
		var sigma float64
		sigma, errs[2] = num(5)
		row.Sigma = int(sigma)
		row.UH, errs[3] = num(6)
		row.US, errs[4] = num(7)
		row.AnchorDH, errs[5] = optFloat(rec[8])
		for _, e := range errs {
			if e != nil {
				return nil, fmt.Errorf("ring_table.csv row %d (%s): %w", i, row.Name, e)
			}
		}
		if row.AnchorDS, err = optFloat(rec[9]); err != nil {
			return nil, fmt.Errorf("ring_table.csv row %d: %w", i, err)
		}
		for j, dst := range []*float64{&row.AnchorUH, &row.AnchorUS} {
			v, err := optFloat(rec[10+j])
			if err != nil {
				return nil, fmt.Errorf("ring_table.csv row %d (%s): %w", i, row.Name, err)
			}
			if v != nil {
				*dst = *v
			}
		}
		rk, ok := pre.row(row)
		if !ok {
			if rk, err = computeRowKeys(row); err != nil {
				return nil, fmt.Errorf("ring_table.csv row %d (%s): %w", i, row.Name, err)
			}
		}
		row.Key, row.constKey, row.Rings, row.atoms = rk.key, rk.constKey, rk.rings, rk.atoms
		row.anchorSource = row.Name + " measured: " + row.Source
		row.anchorNote = "starts from the measured values of the parent " + row.Name + "; substituent corrections added"
		t.maxAtoms = max(t.maxAtoms, rk.atoms)
		if prev, dup := t.byKey[row.Key]; dup {
			return nil, fmt.Errorf("ring_table.csv: %s and %s have the same skeleton key %s", prev.Name, row.Name, row.Key)
		}
		t.byKey[row.Key] = row
		t.rows = append(t.rows, row)
	}
	if err := t.fit(pre); err != nil {
		return nil, err
	}
	return t, nil
}

// computeRowKeys computes a table row's keys from its SMILES: the canonical key of its ring
// system (with the trans marker), the constitution key, its ring count and ring atom count.
func computeRowKeys(row *RingRow) (rowKeys, error) {
	m, err := smiles.Parse(row.SMILES)
	if err != nil {
		return rowKeys{}, err
	}
	p := rings.Perceive(m)
	atoms := map[int]bool{}
	for _, r := range p.SSSR {
		for _, a := range r.Atoms {
			atoms[a] = true
		}
	}
	var list []int
	for a := range atoms {
		list = append(list, a)
	}
	sort.Ints(list)
	return rowKeys{key: systemKey(m, list, -1, row.Trans), constKey: canon.StructureKey(m, p, seq(len(m.Atoms))),
		rings: len(p.SSSR), atoms: len(list)}, nil
}

// fit computes the condensed-phase offsets from data/condensed_fit.csv: each measured value's
// residual against the gas-phase ring-correction estimate (no anchors, no substituent
// corrections), averaged; the offsets' uncertainties are the residuals' sample standard deviation.
func (t *ringTable) fit(pre *precomputed) error {
	recs, err := readCSV("data/condensed_fit.csv")
	if err != nil {
		return err
	}
	var rh, rs []float64
	for i, rec := range recs {
		if i == 0 {
			continue
		}
		if len(rec) != 6 {
			return fmt.Errorf("condensed_fit.csv row %d: %d fields, want 6", i, len(rec))
		}
		dh, err := strconv.ParseFloat(rec[3], 64)
		if err != nil {
			return fmt.Errorf("condensed_fit.csv row %d: %w", i, err)
		}
		ds, err := optFloat(rec[4])
		if err != nil {
			return fmt.Errorf("condensed_fit.csv row %d: %w", i, err)
		}
		fr := FitRow{ID: rec[0], SMILES: rec[1], Kind: rec[2], DHMeasured: dh, DSMeasured: ds, Source: rec[5]}
		fv, ok := pre.fit(fr)
		if !ok {
			gh, gs, err := t.rawGas(fr.SMILES, fr.Kind)
			if err != nil {
				return fmt.Errorf("condensed_fit.csv %s: %w", fr.ID, err)
			}
			fv = fitValues{dhGas: gh, dsGas: gs, constKey: keyOfSMILES(fr.SMILES)}
		}
		gh, gs := fv.dhGas, fv.dsGas
		fr.DHGas, fr.DSGas, fr.constKey = gh, gs, fv.constKey
		rh = append(rh, dh-gh)
		if ds != nil && fr.Kind == "romp" {
			rs = append(rs, *ds-gs)
		}
		t.fitRows = append(t.fitRows, fr)
	}
	t.OffsetH, t.OffsetHU = MeanSD(rh)
	t.OffsetS, t.OffsetSU = MeanSD(rs)
	return nil
}

// rawGas is the uncorrected gas-phase estimate for a fit row: ring opening of the first ring C=C
// (kind romp) or of any ring bond of a cycloalkane (kind lc, whose symmetry is not credited since
// the lc data refer to the neat liquid).
func (t *ringTable) rawGas(text, kind string) (dh, ds float64, err error) {
	m, err := smiles.Parse(text)
	if err != nil {
		return 0, 0, err
	}
	p := rings.Perceive(m)
	if len(p.SSSR) == 0 {
		return 0, 0, fmt.Errorf("no ring")
	}
	atoms := rings.Atoms(p.SSSR, []int{0})
	bi := -1
	for _, b := range p.SSSR[0].Bonds {
		if kind == "lc" || m.Bonds[b].Order == mol.BondDouble {
			bi = b
			break
		}
	}
	if bi < 0 {
		return 0, 0, fmt.Errorf("no ring olefin")
	}
	g := t.gasEstimate(m, p, atoms, bi, false)
	sigma := 1.0
	if kind == "romp" && g.Row != nil && m.HeavyAtomCount() == len(atoms) {
		sigma = float64(g.Row.Sigma)
	}
	return g.DH, g.DS + units.GasConstant*math.Log(sigma), nil
}

// MeanSD returns the mean and sample standard deviation of x.
func MeanSD(x []float64) (mean, sd float64) {
	if len(x) == 0 {
		return 0, 0
	}
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	if len(x) < 2 {
		return mean, 0
	}
	for _, v := range x {
		sd += (v - mean) * (v - mean)
	}
	return mean, math.Sqrt(sd / float64(len(x)-1))
}
