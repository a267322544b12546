package canon_test

import (
	"errors"
	"slices"
	"testing"

	"ringsieve/screening/canon"
	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
	"ringsieve/screening/smiles"
)

// perceived parses s and perceives its rings; all lists every atom.
func perceived(t *testing.T, s string) (m *mol.Molecule, r *rings.Rings, all []int) {
	t.Helper()
	m, err := smiles.Parse(s)
	if err != nil {
		t.Fatalf("%s: %v", s, err)
	}
	all = make([]int, len(m.Atoms))
	for i := range all {
		all[i] = i
	}
	return m, rings.Perceive(m), all
}

func keys(t *testing.T, s string) (skeleton, structure string, order []int) {
	t.Helper()
	m, r, all := perceived(t, s)
	order, _ = canon.Order(m, r, all)
	return canon.SkeletonKey(m, r, all, -1), canon.StructureKey(m, r, all), order
}

// TestKeysIgnoreWritingOnly: writings of one structure share both keys; a charge, an isotope or
// an unusual hydrogen count changes the structure key but not the skeleton key (graph facts,
// common practice).
func TestKeysIgnoreWritingOnly(t *testing.T) {
	same := [][]string{
		{"NCC1CC2C=CC1C2", "C1=CC2CC1CC2CN", "C1C2C=CC1C(CN)C2"},
		{"[NH3+]CC1CC2C=CC1C2", "C1=CC2CC1CC2C[NH3+]"},
		{"C1=CCCC1", "C1CC=CC1", "[CH2]1CC=CC1"},
		{"c1ccccc1C1CC2C=CC1C2", "C1=CC2CC1CC2C1=CC=CC=C1"},
	}
	for _, group := range same {
		sk0, st0, _ := keys(t, group[0])
		for _, s := range group[1:] {
			sk, st, _ := keys(t, s)
			if sk != sk0 || st != st0 {
				t.Errorf("%s vs %s: skeleton %q/%q structure %q/%q", group[0], s, sk0, sk, st0, st)
			}
		}
	}
	differ := [][2]string{
		{"NCC1CC2C=CC1C2", "[NH3+]CC1CC2C=CC1C2"},       // amine and its ammonium salt
		{"C1=CCCC1", "[13CH2]1CC=CC1"},                  // an isotope label
		{"C1=CCCC1", "[CH]1CC=CC1"},                     // a radical centre
		{"OC(=O)C1CC2C=CC1C2", "[O-]C(=O)C1CC2C=CC1C2"}, // acid and carboxylate
	}
	for _, p := range differ {
		sk1, st1, _ := keys(t, p[0])
		sk2, st2, _ := keys(t, p[1])
		if sk1 != sk2 {
			t.Errorf("%s vs %s: skeleton keys differ %q %q", p[0], p[1], sk1, sk2)
		}
		if st1 == st2 {
			t.Errorf("%s vs %s: one structure key %q", p[0], p[1], st1)
		}
	}
}

// TestOrderIsCanonical: the canonical order lists atoms of the same element, degree and charge
// in the same places whatever the writing.
func TestOrderIsCanonical(t *testing.T) {
	sig := func(s string) []string {
		m, _ := smiles.Parse(s)
		_, _, order := keys(t, s)
		var out []string
		for _, a := range order {
			out = append(out, string(rune('A'+m.Atoms[a].Z))+string(rune('0'+m.Degree(a))))
		}
		return out
	}
	a, b := sig("NCC1CC2C=CC1C2"), sig("C1C2C=CC1C(CN)C2")
	if len(a) != len(b) {
		t.Fatal(a, b)
	}
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("orders differ at %d: %v vs %v", i, a, b)
		}
	}
}

// TestWrittenSignatureHoldsWhatSubgraphsDependOn: caches keyed by the written signature hold
// what is computed from the subgraph perceived on its own, which reads charges and whether a
// nitrogen has three connections (pyrrole type) besides the bonds: subgraphs written alike
// that differ there get different signatures; a substituent outside the subgraph does not
// change it (graph facts, common practice).
func TestWrittenSignatureHoldsWhatSubgraphsDependOn(t *testing.T) {
	sig := func(s string, atoms []int) string {
		m, r, all := perceived(t, s)
		if atoms == nil {
			atoms = all
		}
		return canon.WrittenSignature(m, r, atoms, -1, "")
	}
	ring := []int{0, 1, 2, 3, 4, 5}
	differ := [][2]string{
		{"c1ccncc1", "c1cc[nH+]cc1"},          // pyridine and pyridinium: charge and connections
		{"C1=CC2CC1C=C2", "C1=CC2CC1[C-]=C2"}, // a carbanion in the ring
		{"C1=CN=CC=C1", "C1=C[NH+]=CC=C1"},    // non-aromatic writing of the same pair
	}
	for _, p := range differ {
		if a, b := sig(p[0], nil), sig(p[1], nil); a == b {
			t.Errorf("%s and %s share the signature %q", p[0], p[1], a)
		}
	}
	// the ring of N-methyl- and N-H-pyrrolidine written alike: three connections either way
	if a, b := sig("C1CCCN1C", ring[:5]), sig("C1CCCN1[H]", ring[:5]); a != b {
		t.Errorf("a substituent outside the ring changed its signature: %q %q", a, b)
	}
}

// TestWrittenSignatureBondOrder checks that the signature depends on the atoms' order alone: the
// same molecule with its bonds listed in reverse (as another writing's ring closures would list
// them) signs alike, and the bonds come out by local number.
func TestWrittenSignatureBondOrder(t *testing.T) {
	for _, s := range []string{"C1=CC2CC1C2", "O=C1N(C)C(=O)C2C3C=CC(C3)C12", "C1=CC2CC1c1ccccc12", "C12C3C4C1C5C2C3C45"} {
		m, r, all := perceived(t, s)
		want := canon.WrittenSignature(m, r, all, -1, "")
		rev := &mol.Molecule{Atoms: m.Atoms, Bonds: slices.Clone(m.Bonds)}
		slices.Reverse(rev.Bonds)
		rev.Index()
		rr := rings.Perceive(rev)
		if got := canon.WrittenSignature(rev, rr, all, -1, ""); got != want {
			t.Errorf("%s: bonds reversed sign %q, want %q", s, got, want)
		}
	}
	m, r, all := perceived(t, "C12CCC1CC2") // the layout: each atom's bonds to later atoms, ascending
	if got, want := canon.WrittenSignature(m, r, all, -1, ""), "6,6,6,6,6,6,|0-11 0-31 0-51 1-21 2-31 3-41 4-51 "; got != want {
		t.Errorf("bicyclo[2.2.0]hexane-type: %q, want %q", got, want)
	}
}

// TestWrittenSignatureText pins the signature's layout (atoms, then bonds with local numbers and
// orders) and checks that a molecule too large for the sparse local index (over 256 atoms) gives
// the same signature for the same subgraph.
func TestWrittenSignatureText(t *testing.T) {
	m, r, all := perceived(t, "C1=CCCC1")
	if got, want := canon.WrittenSignature(m, r, all, -1, "x"), "6,6,6,6,6,|0-12 0-41 1-21 2-31 3-41 x"; got != want {
		t.Errorf("cyclopentene: %q, want %q", got, want)
	}
	small := "C1=CC2CC1C2N(C)C(=O)c1ccccc1"
	long := small + "CCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCC"
	for len(long) < 400 {
		long += "CCCCCCCCCC"
	}
	ms, rs, _ := perceived(t, small)
	ml, rl, _ := perceived(t, long)
	if len(ml.Atoms) <= 256 {
		t.Fatalf("the long molecule has only %d atoms", len(ml.Atoms))
	}
	for _, atoms := range [][]int{{0, 1, 2, 3, 4, 5, 6}, {0, 1, 2, 3, 4, 5}, {2, 5, 6, 7, 8}, {10, 11, 12, 13, 14, 15}} {
		a, b := canon.WrittenSignature(ms, rs, atoms, -1, ""), canon.WrittenSignature(ml, rl, atoms, -1, "")
		if a != b || len(a) < 2*len(atoms) {
			t.Errorf("atoms %v: %q (%d atoms) and %q (%d atoms)", atoms, a, len(ms.Atoms), b, len(ml.Atoms))
		}
	}
}

// TestSignatureIndex: a signature is matched to the indexed writing it renumbers, with the
// renumbering (checked atom by atom and bond by bond), a suffix is handed back, and graphs that
// differ in a label, a bond order or a bond are not matched.
func TestSignatureIndex(t *testing.T) {
	norbornene := "C1=CC2CCC1C2"
	m0, r0, all0 := perceived(t, norbornene)
	x, err := canon.NewSignatureIndex([]string{
		canon.WrittenSignature(m0, r0, all0, -1, ""),
		func() string { m, r, a := perceived(t, "C1=CCCC1"); return canon.WrittenSignature(m, r, a, -1, "") }(),
	})
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []string{"C1CC2C=CC1C2", "C2CC1CC2C=C1", "C1(C2)CCC2C=C1"} { // norbornene written otherwise
		m, r, all := perceived(t, s)
		sig := canon.WrittenSignature(m, r, all, -1, "|open 1-2")
		e, perm, suffix, ok := x.Match(sig)
		if !ok || e != 0 || suffix != "|open 1-2" {
			t.Fatalf("%s: entry %d, suffix %q, ok %v", s, e, suffix, ok)
		}
		for i := range m.Atoms {
			if m.Atoms[i].Z != m0.Atoms[perm[i]].Z || m.Degree(i) != m0.Degree(perm[i]) {
				t.Errorf("%s: atom %d mapped to %d of a different kind", s, i, perm[i])
			}
		}
		for _, b := range m.Bonds {
			b0 := m0.BondBetween(perm[b.A], perm[b.B])
			if b0 < 0 || m0.Bonds[b0].Order != b.Order {
				t.Errorf("%s: bond %d-%d has no image of its order", s, b.A, b.B)
			}
		}
	}
	for _, s := range []string{"C1CC2CCC1C2", "C1=CC2CCC1O2", "C1=CCCCC1", "C1=CC2CCC2C1"} {
		m, r, all := perceived(t, s)
		if e, _, _, ok := x.Match(canon.WrittenSignature(m, r, all, -1, "")); ok {
			t.Errorf("%s matched entry %d", s, e)
		}
	}
	if _, err := canon.NewSignatureIndex([]string{"not a signature"}); !errors.Is(err, canon.ErrSignature) {
		t.Errorf("a malformed entry: %v", err)
	}
	if _, _, _, ok := x.Match("6,6|0-9 "); ok {
		t.Error("a malformed signature matched")
	}
	// entries filed under a shape computed ahead: one filed under the wrong shape, or one that
	// does not parse, never matches
	sig0 := canon.WrittenSignature(m0, r0, all0, -1, "")
	shape, err := canon.SignatureShape(sig0)
	if err != nil {
		t.Fatal(err)
	}
	if _, _, _, ok := canon.NewShapedSignatureIndex([]string{sig0}, []string{shape}).Match(sig0); !ok {
		t.Error("a shaped entry does not match its own signature")
	}
	mc, rc, ac := perceived(t, "C1=CCCC1")
	if _, _, _, ok := canon.NewShapedSignatureIndex([]string{canon.WrittenSignature(mc, rc, ac, -1, "")}, []string{shape}).Match(sig0); ok {
		t.Error("an entry filed under another graph's shape matched")
	}
	if _, _, _, ok := canon.NewShapedSignatureIndex([]string{"garbage"}, []string{shape}).Match(sig0); ok {
		t.Error("an entry that does not parse matched")
	}
}

// FuzzSignatureMatch: any string given to Match gives an answer or none, never a panic, and a
// match's renumbering is a permutation.
func FuzzSignatureMatch(f *testing.F) {
	m, r, all := perceived(&testing.T{}, "O=C1NC(=O)C2C3C=CC(C3)C12")
	sig := canon.WrittenSignature(m, r, all, -1, "")
	x, err := canon.NewSignatureIndex([]string{sig, "6,6,|0-12 "})
	if err != nil {
		f.Fatal(err)
	}
	for _, s := range []string{sig, sig + "|open 3-4|false", "6,6,|0-12 ", "6,6,|1-02 ", "|", ",|", "6,|0-0", "6,6,|0-1 "} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		_, perm, _, ok := x.Match(s)
		if !ok {
			return
		}
		seen := map[int]bool{}
		for _, p := range perm {
			if p < 0 || p >= len(perm) || seen[p] {
				t.Fatalf("%q: renumbering %v is not a permutation", s, perm)
			}
			seen[p] = true
		}
	})
}

// TestCachedStructureKey: the cached structure key equals the computed one for structures that
// share a skeleton and differ only in what StructureKey writes in brackets — charge, isotope,
// hydrogen count (on the atom or written as hydrogen atoms) — each screened after the others
// so that a signature that missed a label would hand over another structure's key; then over
// every tenth corpus structure, twice (computed, then from the cache).
func TestCachedStructureKey(t *testing.T) {
	canon.ResetCache()
	defer canon.ResetCache()
	family := []string{
		"C1=CC2CC1C(N)C2",         // amine
		"C1=CC2CC1C([NH3+])C2",    // its ammonium salt: charge and hydrogens
		"C1=CC2CC1C([NH2])C2",     // the same written in brackets: the same key
		"C1=CC2CC1C([NH])C2",      // a nitrogen with a hydrogen missing (radical)
		"C1=CC2CC1C([15NH2])C2",   // an isotope
		"C1=CC2CC1C(N([H])[H])C2", // hydrogens written as atoms
		"C1=CC2CC1[C](N)C2",       // a carbon with its hydrogen missing
		"C1=CC2CC1[CH2](N)C2",     // a pentavalent-looking carbon written with two hydrogens
	}
	check := func(s string) {
		t.Helper()
		m, r, all := perceived(t, s)
		if got, want := canon.CachedStructureKey(m, r, all), canon.StructureKey(m, r, all); got != want {
			t.Errorf("%s: cached key %q, computed %q", s, got, want)
		}
	}
	for range 2 {
		for _, s := range family {
			check(s)
		}
	}
	keys := map[string]string{}
	for _, s := range family[:2] {
		m, r, all := perceived(t, s)
		keys[s] = canon.CachedStructureKey(m, r, all)
	}
	if keys[family[0]] == keys[family[1]] {
		t.Errorf("an amine and its salt share the key %q", keys[family[0]])
	}
	for range 2 {
		for n, e := range reftest.Corpus(t) {
			if n%10 == 0 {
				check(e.SMILES)
			}
		}
	}
}
