package thermo

import (
	"bytes"
	"flag"
	"fmt"
	"go/format"
	"os"
	"reflect"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"testing"

	"ringsieve/screening/canon"
	"ringsieve/screening/describe"
	"ringsieve/screening/mol"
	"ringsieve/screening/smiles"
)

// seedsGenFile is the generated file TestSeedsFresh checks and rewrites.
const seedsGenFile = "seeds_gen.go"

var seedWritings = flag.Int("seedwritings", 100, "writings checked per seeded structure by TestSeedsFresh (0: every one)")

// seedDerivatives are ring systems of common ROMP monomers that the table holds only as parts
// (common practice: the imides and anhydrides of norbornene and oxanorbornene made from
// cyclopentadiene or furan and maleic anhydride or maleimides, and the cyclopentadiene adducts
// of cyclopentene and indene). Substituents outside a ring system do not enter its signature,
// so these and the table's rows cover their substituted derivatives.
var seedDerivatives = []struct{ name, smiles string }{
	{"norbornene-2,3-dicarboximide", "O=C1NC(=O)C2C3C=CC(C3)C12"},
	{"norbornene-2,3-dicarboxylic anhydride", "O=C1OC(=O)C2C3C=CC(C3)C12"},
	{"7-oxanorbornene-2,3-dicarboximide", "O=C1NC(=O)C2C3C=CC(O3)C12"},
	{"7-oxanorbornene-2,3-dicarboxylic anhydride", "O=C1OC(=O)C2C3C=CC(O3)C12"},
	{"dihydrodicyclopentadiene", "C1=CC2CC1C1CCCC21"},
	{"cyclopentadiene-indene adduct", "C1=CC2CC1C1Cc3ccccc3C21"},
}

type seedStructure struct {
	name string
	m    *mol.Molecule
	s    *describe.Structure
}

// seedStructures are the table's rows with a ring olefin (cis or unmarked: a trans row needs a
// stereo writing) and seedDerivatives, parsed and described.
func seedStructures(t *testing.T, tab *ringTable) []seedStructure {
	t.Helper()
	var out []seedStructure
	add := func(name, smi string) {
		m, err := smiles.Parse(smi)
		if err != nil {
			t.Fatalf("%s %s: %v", name, smi, err)
		}
		s, err := describe.DescribeMolecule(m, smi)
		if err != nil {
			t.Fatalf("%s %s: %v", name, smi, err)
		}
		if len(s.Olefins) > 0 {
			out = append(out, seedStructure{name, m, s})
		}
	}
	for _, r := range tab.rows {
		if !r.Trans {
			add(r.Name, r.SMILES)
		}
	}
	for _, d := range seedDerivatives {
		add(d.name, d.smiles)
	}
	return out
}

// buildSeeds computes the seeds file: for each structure and ring olefin, the system's and the
// core's keys, the gas-phase estimate and the parent name, computed without caches or seeds;
// systems that renumber one already listed are merged into it.
func buildSeeds(t *testing.T, tab *ringTable) []byte {
	t.Helper()
	hash, err := inputsHash()
	if err != nil {
		t.Fatal(err)
	}
	var systems []seedSystem
	var sigs []string
	// add returns the entry for the subgraph sig describes (new or an isomorphic one) and the
	// renumbering from sig's local numbers to the entry's
	add := func(name, sig, key string) (*seedSystem, []int) {
		x, err := canon.NewSignatureIndex(sigs)
		if err != nil {
			t.Fatal(err)
		}
		if e, perm, suffix, ok := x.Match(sig); ok && suffix == "" {
			if systems[e].Key != key {
				t.Fatalf("%s: key %q, the isomorphic %s has %q", name, key, systems[e].Name, systems[e].Key)
			}
			return &systems[e], perm
		}
		shape, err := canon.SignatureShape(sig)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		sigs = append(sigs, sig)
		systems = append(systems, seedSystem{Name: name, Signature: sig, Shape: shape, Key: key})
		perm := make([]int, strings.Count(sig[:strings.Index(sig, "|")], ","))
		for i := range perm {
			perm[i] = i
		}
		return &systems[len(systems)-1], perm
	}
	for _, st := range seedStructures(t, tab) {
		m, s := st.m, st.s
		for _, o := range s.Olefins {
			sysSig := canon.WrittenSignature(m, s.Rings, o.SystemAtoms, -1, "")
			sys, perm := add(st.name, sysSig, canon.SkeletonKey(m, s.Rings, o.SystemAtoms, -1))
			g := tab.gasEstimateUncached(m, o.SystemAtoms, o.Bond, o.Desc.TransOlefin)
			la, lb := sort.SearchInts(o.SystemAtoms, o.A), sort.SearchInts(o.SystemAtoms, o.B)
			sg := seedGas{Open: orderedPair(perm[la], perm[lb]), Trans: o.Desc.TransOlefin, DH: g.DH, DS: g.DS, UH: g.UH, US: g.US,
				AllHits: g.AllHits, Terms: g.Terms, Survive: g.Survive, Spectate: g.Spectate, Path: g.Path}
			if g.Row != nil {
				if tab.byKey[g.Row.Key] != g.Row {
					t.Fatalf("%s: the estimate's row %s is not the table's under its key", st.name, g.Row.Name)
				}
				sg.Row = g.Row.Key
			}
			if !slices.ContainsFunc(sys.Gas, func(x seedGas) bool { return x.Open == sg.Open && x.Trans == sg.Trans }) {
				sys.Gas = append(sys.Gas, sg)
			}
			core, cperm := sys, perm
			if !slices.Equal(o.CoreAtoms, o.SystemAtoms) {
				core, cperm = add(st.name+" (olefin core)", canon.WrittenSignature(m, s.Rings, o.CoreAtoms, -1, ""),
					canon.SkeletonKey(m, s.Rings, o.CoreAtoms, -1))
			}
			pi := computeParent(s, o)
			ca, cb := sort.SearchInts(o.CoreAtoms, o.A), sort.SearchInts(o.CoreAtoms, o.B)
			sp := seedParent{Olefin: orderedPair(cperm[ca], cperm[cb]), Name: pi.name}
			if pi.err != nil {
				sp.Error = pi.err.Error()
			}
			if !slices.ContainsFunc(core.Parents, func(x seedParent) bool { return x.Olefin == sp.Olefin }) {
				core.Parents = append(core.Parents, sp)
			}
		}
	}
	for i := range systems {
		sys := &systems[i]
		slices.SortFunc(sys.Gas, func(a, b seedGas) int { return cmpPairs(a.Open, b.Open) })
		slices.SortFunc(sys.Parents, func(a, b seedParent) int { return cmpPairs(a.Olefin, b.Olefin) })
	}
	return seedsSource(t, hash, systems)
}

// seedsSource writes the seeds as Go source (gofmt-formatted; floats in the shortest form that
// reads back exactly).
func seedsSource(t *testing.T, hash string, systems []seedSystem) []byte {
	t.Helper()
	var b bytes.Buffer
	q := strconv.Quote
	fl := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	strs := func(x []string) string {
		if x == nil {
			return "nil"
		}
		out := make([]string, len(x))
		for i, v := range x {
			out[i] = q(v)
		}
		return "[]string{" + strings.Join(out, ", ") + "}"
	}
	fmt.Fprintf(&b, "// Code generated by `go test ./screening/thermo -run SeedsFresh -update`; DO NOT EDIT.\n\n")
	fmt.Fprintf(&b, "package thermo\n\n// seedInputs is the SHA-256 of the CSV files the seeds were computed from.\nconst seedInputs = %s\n\n", q(hash))
	fmt.Fprintf(&b, "// seedSystems: see seeds.go.\nvar seedSystems = []seedSystem{\n")
	for _, sys := range systems {
		fmt.Fprintf(&b, "{Name: %s, Signature: %s, Shape: %s, Key: %s,\n", q(sys.Name), q(sys.Signature), q(sys.Shape), q(sys.Key))
		if len(sys.Gas) > 0 {
			b.WriteString("Gas: []seedGas{\n")
			for _, g := range sys.Gas {
				fmt.Fprintf(&b, "{Open: [2]int{%d, %d}, Trans: %v, DH: %s, DS: %s, UH: %s, US: %s, AllHits: %v, Terms: %s, Survive: %s, Row: %s, Spectate: %d, Path: %s},\n",
					g.Open[0], g.Open[1], g.Trans, fl(g.DH), fl(g.DS), fl(g.UH), fl(g.US), g.AllHits, strs(g.Terms), strs(g.Survive), q(g.Row), g.Spectate, q(g.Path))
			}
			b.WriteString("},\n")
		}
		if len(sys.Parents) > 0 {
			b.WriteString("Parents: []seedParent{\n")
			for _, p := range sys.Parents {
				fmt.Fprintf(&b, "{Olefin: [2]int{%d, %d}, Name: %s, Error: %s},\n", p.Olefin[0], p.Olefin[1], q(p.Name), q(p.Error))
			}
			b.WriteString("},\n")
		}
		b.WriteString("},\n")
	}
	b.WriteString("}\n")
	out, err := format.Source(b.Bytes())
	if err != nil {
		t.Fatalf("generated seeds do not parse: %v", err)
	}
	return out
}

func cmpPairs(a, b [2]int) int {
	if a[0] != b[0] {
		return a[0] - b[0]
	}
	return a[1] - b[1]
}

// TestSeedsFresh: seeds_gen.go is what buildSeeds computes (-update rewrites it), and every
// SMILES writing of every seeded structure — each order of its ring system's atoms that a
// writing can give (writingOrders), all of them with -seedwritings 0, else an even sample —
// reads from the seeds exactly what is computed for it without caches: the system's and the
// core's skeleton keys, the gas-phase estimate of each ring olefin and its parent's name. It
// checks the signature matching and that the values do not depend on the writing.
func TestSeedsFresh(t *testing.T) {
	tab := Table()
	want := buildSeeds(t, tab)
	have, _ := os.ReadFile(seedsGenFile)
	checkGenerated(t, seedsGenFile, have, want, "SeedsFresh")
	if seeds().index == nil || seeds().index.Len() < 40 {
		t.Fatalf("the embedded seeds were not taken")
	}
	limit := *seedWritings
	if testing.Short() && limit > 20 {
		limit = 20
	}
	checked := 0
	for _, st := range seedStructures(t, tab) {
		sys := st.s.Olefins[0].SystemAtoms
		for _, o := range st.s.Olefins {
			if !slices.Equal(o.SystemAtoms, sys) {
				t.Fatalf("%s: more than one ring system", st.name)
			}
		}
		total := 0
		writingOrders(sys, st.m.HeavyNbrs, func([]int) bool { total++; return true })
		stride := 1
		if limit > 0 && total > limit {
			stride = (total + limit - 1) / limit
		}
		k := 0
		writingOrders(sys, st.m.HeavyNbrs, func(order []int) bool {
			k++
			if (k-1)%stride != 0 {
				return true
			}
			checked++
			checkSeededWriting(t, tab, st.name, permuted(st.m, order))
			return !t.Failed()
		})
	}
	t.Logf("%d writings checked", checked)
}

// checkSeededWriting compares what the seeds give for molecule m (one writing) with what is
// computed.
func checkSeededWriting(t *testing.T, tab *ringTable, name string, m *mol.Molecule) {
	t.Helper()
	s, err := describe.DescribeMolecule(m, "")
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	for _, o := range s.Olefins {
		for _, atoms := range [][]int{o.SystemAtoms, o.CoreAtoms} {
			sig := canon.WrittenSignature(m, s.Rings, atoms, -1, "")
			got, ok := seededKey(sig)
			if want := canon.SkeletonKey(m, s.Rings, atoms, -1); !ok || got != want {
				t.Errorf("%s, writing %s: key %q (%v), computed %q", name, sig, got, ok, want)
			}
		}
		base := canon.WrittenSignature(m, s.Rings, o.SystemAtoms, -1, "")
		key := gasKey(m, o.SystemAtoms, o.Bond, o.Desc.TransOlefin, base)
		got, ok := tab.seededGas(key)
		if want := tab.gasEstimateUncached(m, o.SystemAtoms, o.Bond, o.Desc.TransOlefin); !ok || !reflect.DeepEqual(got, want) {
			t.Errorf("%s, %s: gas estimate %+v (%v), computed %+v", name, key, got, ok, want)
		}
		pk := parentKey(s, o)
		pn, ok := seededParent(pk)
		pi := computeParent(s, o)
		if !ok || pn.name != pi.name || (pn.err == nil) != (pi.err == nil) || (pi.err != nil && pn.err.Error() != pi.err.Error()) {
			t.Errorf("%s, %s: parent %+v (%v), computed %q %v", name, pk, pn, ok, pi.name, pi.err)
		}
	}
}

// TestSeedsIgnoredWhenInputsDiffer: seeds computed from other table files are not used; turned
// off, no seed is read.
func TestSeedsIgnoredWhenInputsDiffer(t *testing.T) {
	if err := checkInputs(seedInputs); err != nil {
		t.Fatalf("the shipped seeds: %v", err)
	}
	if x := newSeedSet(strings.Repeat("0", 64), seedSystems); x.index != nil {
		t.Error("seeds of other inputs were indexed")
	}
	sig := seeds().systems[0].Signature
	if _, ok := seededKey(sig); !ok {
		t.Fatalf("the first system's own signature is not found")
	}
	UseSeeds(false)
	defer UseSeeds(true)
	if _, ok := seededKey(sig); ok {
		t.Error("seeds turned off still answered")
	}
}

// writingOrders calls fn with every order in which a SMILES writing can list the atoms of the
// connected subgraph sys (neighbours given by nbrs, others ignored): the preorders of its
// spanning trees, each child subtree written whole before the next. fn returns false to stop.
func writingOrders(sys []int, nbrs func(a int) []int, fn func(order []int) bool) {
	in := map[int]bool{}
	for _, a := range sys {
		in[a] = true
	}
	seen := map[int]bool{}
	order := make([]int, 0, len(sys))
	var stack []int
	stop := false
	var rec func()
	rec = func() {
		if stop {
			return
		}
		if len(order) == len(sys) {
			stop = !fn(order)
			return
		}
		// the next atom is an unvisited neighbour of an atom on the open branch, hung from the
		// deepest such atom (leaving more of the branch open never loses a writing)
		tried := map[int]bool{}
		for d := len(stack) - 1; d >= 0 && !stop; d-- {
			for _, x := range nbrs(stack[d]) {
				if !in[x] || seen[x] || tried[x] {
					continue
				}
				tried[x] = true
				saved := slices.Clone(stack)
				stack = append(stack[:d+1], x)
				seen[x] = true
				order = append(order, x)
				rec()
				order = order[:len(order)-1]
				seen[x] = false
				stack = saved
			}
		}
	}
	for _, a := range sys {
		stack = []int{a}
		seen[a] = true
		order = append(order[:0], a)
		rec()
		seen[a] = false
		if stop {
			return
		}
	}
}

// TestWritingOrders: cyclopentene's five ring atoms can be written in 30 orders, counted by
// hand: from each of the 5 atoms, around the ring either way (2), or one or two atoms to one
// side first and then the rest from the other side (2 × 2) — 6 per start; each order is a
// permutation in which every atom after the first is bonded to an earlier one.
func TestWritingOrders(t *testing.T) {
	m, err := smiles.Parse("C1=CCCC1")
	if err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	writingOrders([]int{0, 1, 2, 3, 4}, m.HeavyNbrs, func(order []int) bool {
		k := fmt.Sprint(order)
		if seen[k] {
			t.Errorf("order %s twice", k)
		}
		seen[k] = true
		for i := 1; i < len(order); i++ {
			bonded := false
			for _, x := range order[:i] {
				if m.BondBetween(x, order[i]) >= 0 {
					bonded = true
				}
			}
			if !bonded {
				t.Errorf("order %v: atom %d bonded to none before it", order, order[i])
			}
		}
		return true
	})
	if len(seen) != 30 {
		t.Errorf("%d orders, want 30", len(seen))
	}
}

// permuted returns m with the atoms of first in that order, then the others in theirs (the bonds
// renumbered, their list kept).
func permuted(m *mol.Molecule, first []int) *mol.Molecule {
	pos := make([]int, len(m.Atoms))
	for i := range pos {
		pos[i] = -1
	}
	var order []int
	for _, a := range first {
		pos[a] = len(order)
		order = append(order, a)
	}
	for a := range m.Atoms {
		if pos[a] < 0 {
			pos[a] = len(order)
			order = append(order, a)
		}
	}
	p := &mol.Molecule{}
	for _, a := range order {
		p.Atoms = append(p.Atoms, m.Atoms[a])
	}
	for _, b := range m.Bonds {
		nb := b
		nb.A, nb.B = pos[b.A], pos[b.B]
		p.Bonds = append(p.Bonds, nb)
	}
	p.Index()
	return p
}

// TestSeedsConcurrentMatch: a fresh index answered from several goroutines at once (its entries
// are parsed on first use) finds every shipped system under its own signature; run with -race.
func TestSeedsConcurrentMatch(t *testing.T) {
	s := newSeedSet(seedInputs, seedSystems)
	var wg sync.WaitGroup
	for g := 0; g < 8; g++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i, sys := range seedSystems {
				if got, _, _, ok := s.match(sys.Signature); !ok || got != &s.systems[i] {
					t.Errorf("%s: not found under its own signature", sys.Name)
				}
			}
		}()
	}
	wg.Wait()
}
