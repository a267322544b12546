package screening

import (
	"embed"
	"encoding/csv"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"sync"
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

//go:embed data/ring_table.csv data/condensed_fit.csv
var dataFS embed.FS

// Basis values of a thermodynamic estimate.
const (
	BasisRingTable = "ring_table"
	BasisAdditive  = "additive_estimate"
	BasisSupplied  = "supplied"
	BasisStrain    = "strain_estimate"
)

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
}

type ringTable struct {
	rows  []*RingRow
	byKey map[string]*RingRow
	// offsets fitted on the measured values
	OffsetH, OffsetHU float64
	OffsetS, OffsetSU float64
	fitRows           []FitRow
}

// FitRow is one measured value of data/condensed_fit.csv with the estimator's gas-phase value.
type FitRow struct {
	ID, SMILES, Kind, Source string
	DHMeasured               float64
	DSMeasured               *float64
	DHGas, DSGas             float64
}

var (
	tableOnce sync.Once
	table     *ringTable
	tableErr  error
)

// Table returns the embedded ring-system table, loading it once. A load failure is a build
// defect and panics at first use in tests; callers get the error from TableErr.
func Table() *ringTable {
	tableOnce.Do(func() { table, tableErr = loadTable() })
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

func loadTable() (*ringTable, error) {
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
		if v, _ := optFloat(rec[10]); v != nil {
			row.AnchorUH = *v
		}
		if v, _ := optFloat(rec[11]); v != nil {
			row.AnchorUS = *v
		}
		m, err := ParseSMILES(row.SMILES)
		if err != nil {
			return nil, fmt.Errorf("ring_table.csv row %d (%s): %w", i, row.Name, err)
		}
		p := Perceive(m)
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
		row.Key = systemKey(m, list, -1, row.Trans)
		row.Rings = len(p.SSSR)
		if prev, dup := t.byKey[row.Key]; dup {
			return nil, fmt.Errorf("ring_table.csv: %s and %s have the same skeleton key %s", prev.Name, row.Name, row.Key)
		}
		t.byKey[row.Key] = row
		t.rows = append(t.rows, row)
	}
	if err := t.fit(); err != nil {
		return nil, err
	}
	return t, nil
}

// systemKey is the canonical key of a ring system given as atoms of m (bonds among them, less
// skip), computed on an extracted copy so that aromaticity is judged on the system alone;
// trans adds the marker for a trans ring olefin.
func systemKey(m *Molecule, atoms []int, skip int, trans bool) string {
	sub, _ := extract(m, atoms, skip)
	all := make([]int, len(sub.Atoms))
	for i := range all {
		all[i] = i
	}
	k := SkeletonKey(sub, all, -1)
	if trans {
		k += "|E"
	}
	return k
}

// extract copies the atoms (and the bonds among them, less skip) into a new molecule with no
// hydrogens and perceives it. It returns the copy and the map from new to old indices.
func extract(m *Molecule, atoms []int, skip int) (*Molecule, []int) {
	sub := &Molecule{}
	idx := map[int]int{}
	var back []int
	for _, a := range atoms {
		idx[a] = len(sub.Atoms)
		at := m.Atoms[a]
		at.HCount, at.Bracket, at.nbrOrder, at.Chiral = 0, true, nil, 0
		if at.Z == 7 || at.Z == 15 || at.Z == 5 {
			// keep pyrrole-type nitrogens three-connected for aromaticity
			if len(m.adj[a])+m.Atoms[a].HCount == 3 {
				at.HCount = 3 - len(m.heavyNbrsIn(a, idx))
				if at.HCount < 0 {
					at.HCount = 0
				}
			}
		}
		sub.Atoms = append(sub.Atoms, at)
		back = append(back, a)
	}
	for bi, b := range m.Bonds {
		if bi == skip {
			continue
		}
		x, okx := idx[b.A]
		y, oky := idx[b.B]
		if okx && oky {
			nb := b
			nb.A, nb.B, nb.Dir = x, y, 0
			sub.Bonds = append(sub.Bonds, nb)
		}
	}
	sub.buildAdjacency()
	sub.findComponents()
	Perceive(sub)
	return sub, back
}

func (m *Molecule) heavyNbrsIn(a int, idx map[int]int) []int {
	var out []int
	for _, x := range m.heavyNbrs(a) {
		if _, ok := idx[x]; ok {
			out = append(out, x)
		}
	}
	return out
}

// strainTerm is one ring-correction term of an estimate.
type strainTerm struct {
	Key    string
	Name   string
	H, S   float64
	UH, US float64
	Hit    bool // found in the table (else a fallback)
	Row    *RingRow
}

// ringSystemsTerms returns the strain terms of every ring system in the extracted molecule sub:
// a whole-system row when the table has one, else the sum of its cores (rings sharing three or
// more atoms), each a row or a fallback.
func (t *ringTable) ringSystemsTerms(sub *Molecule, trans bool) []strainTerm {
	p := Perceive(sub)
	s := &Structure{Mol: sub, P: p}
	s.buildSystems()
	var terms []strainTerm
	for _, sys := range s.systems {
		atoms := ringAtoms(p.SSSR, sys)
		key := systemKey(sub, atoms, -1, trans && len(sys) == 1)
		if row, ok := t.byKey[key]; ok {
			terms = append(terms, strainTerm{Key: key, Name: row.Name, H: row.RSCH, S: row.RSCS, UH: row.UH, US: row.US, Hit: true, Row: row})
			continue
		}
		// cores
		done := map[int]bool{}
		for _, r := range sys {
			if done[r] {
				continue
			}
			core := coreOfRing(p.SSSR, sys, r)
			for _, c := range core {
				done[c] = true
			}
			catoms := ringAtoms(p.SSSR, core)
			ckey := systemKey(sub, catoms, -1, false)
			if row, ok := t.byKey[ckey]; ok {
				terms = append(terms, strainTerm{Key: ckey, Name: row.Name, H: row.RSCH, S: row.RSCS, UH: row.UH, US: row.US, Hit: true, Row: row})
				continue
			}
			terms = append(terms, t.fallback(sub, p, core, ckey))
		}
	}
	return terms
}

// coreOfRing returns ring r plus every ring of the system sharing three or more atoms with the
// growing set.
func coreOfRing(rings []Ring, system []int, r int) []int {
	in := map[int]bool{r: true}
	core := []int{r}
	for changed := true; changed; {
		changed = false
		atoms := map[int]bool{}
		for _, c := range core {
			for _, a := range rings[c].Atoms {
				atoms[a] = true
			}
		}
		for _, x := range system {
			if in[x] {
				continue
			}
			n := 0
			for _, a := range rings[x].Atoms {
				if atoms[a] {
					n++
				}
			}
			if n >= 3 {
				in[x] = true
				core = append(core, x)
				changed = true
			}
		}
	}
	sort.Ints(core)
	return core
}

// fallback estimates a core the table lacks. First choice: the all-carbon analogue of the whole
// core (heteroatoms replaced by carbon, bond orders kept) when the table has it, e.g. a
// diaza-oxa-norbornene read as norbornene, with 8 kJ/mol and 15 J/(mol K) added to the
// uncertainty for the substitution. Else each ring on its own: the all-carbon ring with the same
// bond pattern, else the cycloalkene (or cycloalkane) of the same size with 5 kJ/mol more
// uncertainty; aromatic rings count zero; bridged cores add 25 kJ/mol of uncertainty for the
// unknown bridging strain. Marked not-hit either way.
func (t *ringTable) fallback(sub *Molecule, p *Perceived, core []int, key string) strainTerm {
	term := strainTerm{Key: key, Name: "estimate for " + key}
	catoms := ringAtoms(p.SSSR, core)
	if row, ok := t.byKey[carbonAnalogueKey(sub, catoms)]; ok && len(core) > 1 {
		term.Name = "all-carbon analogue " + row.Name
		term.H, term.S = row.RSCH, row.RSCS
		term.UH, term.US = math.Hypot(row.UH, 8), math.Hypot(row.US, 15)
		return term
	}
	for _, ri := range core {
		r := p.SSSR[ri]
		arom := true
		doubles := 0
		for _, b := range r.Bonds {
			if !p.AromaticBond[b] {
				arom = false
			}
			if sub.Bonds[b].Order == bondDouble && !p.AromaticBond[b] {
				doubles++
			}
		}
		if arom {
			continue
		}
		n := len(r.Atoms)
		ring := &Molecule{}
		for i := 0; i < n; i++ {
			ring.Atoms = append(ring.Atoms, Atom{Z: 6, Bracket: true})
		}
		for i := 0; i < n; i++ {
			ord := sub.Bonds[r.Bonds[i]].Order
			if p.AromaticBond[r.Bonds[i]] {
				ord = 1
			}
			ring.Bonds = append(ring.Bonds, Bond{A: i, B: (i + 1) % n, Order: ord})
		}
		row, ok := t.byKey[carbonAnalogueKey(ring, seq(n))]
		widen := 0.0
		if !ok {
			// same size, one ring double bond (or none)
			parent := "C1" + strings.Repeat("C", n-1) + "1"
			if doubles > 0 {
				parent = "C1=C" + strings.Repeat("C", n-2) + "1"
			}
			if pm, err := ParseSMILES(parent); err == nil {
				row, ok = t.byKey[carbonAnalogueKey(pm, seq(len(pm.Atoms)))]
			}
			widen = 5
		}
		if ok {
			term.H += row.RSCH
			term.S += row.RSCS
			term.UH = math.Hypot(term.UH, row.UH+5+widen)
			term.US = math.Hypot(term.US, row.US+5+widen)
			continue
		}
		// no row of that size: large rings are nearly strain-free
		if n >= 12 {
			term.S += 30
			term.UH = math.Hypot(term.UH, 8)
			term.US = math.Hypot(term.US, 15)
		} else {
			term.H += 25
			term.S += 90
			term.UH = math.Hypot(term.UH, 20)
			term.US = math.Hypot(term.US, 25)
		}
	}
	if len(core) > 1 {
		term.UH = math.Hypot(term.UH, 25)
		term.US = math.Hypot(term.US, 25)
	}
	return term
}

func seq(n int) []int {
	out := make([]int, n)
	for i := range out {
		out[i] = i
	}
	return out
}

// carbonAnalogueKey is the skeleton key of atoms with every atom made a non-aromatic carbon and
// aromatic bonds read as single (the bond orders of the Kekulé form are kept).
func carbonAnalogueKey(m *Molecule, atoms []int) string {
	c := &Molecule{}
	idx := map[int]int{}
	for i, a := range atoms {
		idx[a] = i
		c.Atoms = append(c.Atoms, Atom{Z: 6, Bracket: true})
	}
	for _, b := range m.Bonds {
		x, okx := idx[b.A]
		y, oky := idx[b.B]
		if okx && oky {
			c.Bonds = append(c.Bonds, Bond{A: x, B: y, Order: b.Order})
		}
	}
	c.buildAdjacency()
	c.findComponents()
	Perceive(c)
	return SkeletonKey(c, seq(len(c.Atoms)), -1)
}

// cancelTerms removes terms present on both sides (spectator rings that ring opening leaves
// unchanged).
func cancelTerms(mono, surv []strainTerm) ([]strainTerm, []strainTerm) {
	used := make([]bool, len(surv))
	var m2 []strainTerm
	for _, a := range mono {
		matched := false
		for j, b := range surv {
			if !used[j] && a.Key == b.Key {
				used[j] = true
				matched = true
				break
			}
		}
		if !matched {
			m2 = append(m2, a)
		}
	}
	var s2 []strainTerm
	for j, b := range surv {
		if !used[j] {
			s2 = append(s2, b)
		}
	}
	return m2, s2
}

// GasEstimate is the gas-phase ring-correction estimate for opening one ring olefin.
type GasEstimate struct {
	DH, DS   float64 // kJ/mol, J/(mol K), gas phase, before offsets
	UH, US   float64
	AllHits  bool
	Terms    []string // names of the monomer-side terms
	Survive  []string // names of surviving terms
	Row      *RingRow // whole-system row when the table has the system
	Spectate int      // spectator terms cancelled
	Path     string   // "monomer terms → surviving terms", for the result's source
}

// gasEstimate computes the ring-correction part for opening bond bi of the ring system atoms.
func (t *ringTable) gasEstimate(m *Molecule, systemAtoms []int, bi int, trans bool) GasEstimate {
	return t.gasEstimateSig(m, systemAtoms, bi, trans, writtenSignature(m, systemAtoms, -1, ""))
}

// gasEstimateSig is gasEstimate with the system's written signature already computed.
func (t *ringTable) gasEstimateSig(m *Molecule, systemAtoms []int, bi int, trans bool, base string) GasEstimate {
	// systemAtoms is sorted: the olefin is named by its atoms' local positions
	la, lb := sort.SearchInts(systemAtoms, m.Bonds[bi].A), sort.SearchInts(systemAtoms, m.Bonds[bi].B)
	sig := base + "|open " + strconv.Itoa(la) + "-" + strconv.Itoa(lb) + "|" + strconv.FormatBool(trans)
	if g, ok := gasMemo.get(sig); ok {
		return g
	}
	g := t.gasEstimateUncached(m, systemAtoms, bi, trans)
	gasMemo.put(sig, g)
	return g
}

func (t *ringTable) gasEstimateUncached(m *Molecule, systemAtoms []int, bi int, trans bool) GasEstimate {
	subM, _ := extract(m, systemAtoms, -1)
	subS, _ := extract(m, systemAtoms, bi)
	mono := t.ringSystemsTerms(subM, trans)
	surv := t.ringSystemsTerms(subS, false)
	var g GasEstimate
	if len(mono) == 1 && mono[0].Hit {
		g.Row = mono[0].Row
	}
	before := len(mono)
	mono, surv = cancelTerms(mono, surv)
	g.Spectate = before - len(mono)
	g.AllHits = true
	var uh2, us2 float64
	for _, x := range mono {
		g.DH -= x.H
		g.DS -= x.S
		uh2 += x.UH * x.UH
		us2 += x.US * x.US
		g.AllHits = g.AllHits && x.Hit
		g.Terms = append(g.Terms, x.Name)
	}
	for _, x := range surv {
		g.DH += x.H
		g.DS += x.S
		uh2 += x.UH * x.UH
		us2 += x.US * x.US
		g.AllHits = g.AllHits && x.Hit
		g.Survive = append(g.Survive, x.Name)
	}
	g.UH, g.US = math.Sqrt(uh2), math.Sqrt(us2)
	g.Path = strings.Join(g.Terms, " + ")
	if len(g.Survive) > 0 {
		g.Path += " → " + strings.Join(g.Survive, " + ")
	} else {
		g.Path += " → open chain"
	}
	return g
}

// fit computes the condensed-phase offsets from data/condensed_fit.csv: each measured value's
// residual against the gas-phase ring-correction estimate (no anchors, no substituent
// corrections), averaged; the offsets' uncertainties are the residuals' sample standard deviation.
func (t *ringTable) fit() error {
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
		gh, gs, err := t.rawGas(fr.SMILES, fr.Kind)
		if err != nil {
			return fmt.Errorf("condensed_fit.csv %s: %w", fr.ID, err)
		}
		fr.DHGas, fr.DSGas = gh, gs
		rh = append(rh, dh-gh)
		if ds != nil && fr.Kind == "romp" {
			rs = append(rs, *ds-gs)
		}
		t.fitRows = append(t.fitRows, fr)
	}
	t.OffsetH, t.OffsetHU = meanSD(rh)
	t.OffsetS, t.OffsetSU = meanSD(rs)
	return nil
}

// rawGas is the uncorrected gas-phase estimate for a fit row: ring opening of the first ring C=C
// (kind romp) or of any ring bond of a cycloalkane (kind lc, whose symmetry is not credited since
// the lc data refer to the neat liquid).
func (t *ringTable) rawGas(smiles, kind string) (dh, ds float64, err error) {
	m, err := ParseSMILES(smiles)
	if err != nil {
		return 0, 0, err
	}
	p := Perceive(m)
	if len(p.SSSR) == 0 {
		return 0, 0, fmt.Errorf("no ring")
	}
	atoms := ringAtoms(p.SSSR, []int{0})
	bi := -1
	for _, b := range p.SSSR[0].Bonds {
		if kind == "lc" || m.Bonds[b].Order == bondDouble {
			bi = b
			break
		}
	}
	if bi < 0 {
		return 0, 0, fmt.Errorf("no ring olefin")
	}
	g := t.gasEstimate(m, atoms, bi, false)
	sigma := 1.0
	if kind == "romp" && g.Row != nil && m.HeavyAtomCount() == len(atoms) {
		sigma = float64(g.Row.Sigma)
	}
	return g.DH, g.DS + GasConstant*math.Log(sigma), nil
}

func meanSD(x []float64) (mean, sd float64) {
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
