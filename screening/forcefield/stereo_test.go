package forcefield

import (
	"strings"
	"testing"

	"ringsieve/screening/molfile"
	"ringsieve/screening/smiles"
)

// TestStereoConventionAgainstRDKit reads the stereo elements of every reference SMILES that has
// stereo marks and checks them against RDKit's own 3-D embedding of that SMILES (the molblocks
// of rdkit_mmff.jsonl, atoms in SMILES order with hydrogens appended per parent, as ours): every
// tetrahedral centre must have the handedness our reading gives, and the olefins their
// cis/trans geometry (RDKit's embedding is allowed to miss the geometry of a ring olefin, which
// it sometimes cannot honour; those are counted, not failed).
func TestStereoConventionAgainstRDKit(t *testing.T) {
	centres, olefins, ringMiss, structs := 0, 0, 0, 0
	for _, r := range loadMMFFRefs(t) {
		if !strings.ContainsAny(r.SMILES, "@/\\") {
			continue
		}
		m, err := smiles.Parse(r.SMILES)
		if err != nil {
			t.Fatal(err)
		}
		mh := WithHydrogens(m)
		rec, err := molfile.ParseRecord(r.Molblock)
		if err != nil || len(rec.Coords) != len(mh.Atoms) {
			t.Fatalf("%s: molblock has %d atoms, SMILES with hydrogens %d (%v)", r.ID, len(rec.Coords), len(mh.Atoms), err)
		}
		x := make([]float64, 0, 3*len(rec.Coords))
		for _, c := range rec.Coords {
			x = append(x, c[0], c[1], c[2])
		}
		st := StereoFromGraph(mh)
		structs++
		centres += len(st.Centres)
		olefins += len(st.Olefins)
		badC, badO := st.StereoViolations(x)
		for _, c := range badC {
			t.Errorf("%s %s: centre %d has the opposite handedness in RDKit's embedding", r.ID, r.SMILES, c.Atom)
		}
		for _, o := range badO {
			if _, _, inRing := ringPath(mh, mh.BondBetween(o.A, o.B)); inRing {
				ringMiss++
				continue
			}
			t.Errorf("%s %s: olefin %d=%d has the other geometry in RDKit's embedding", r.ID, r.SMILES, o.A, o.B)
		}
	}
	if centres < 50 || olefins < 20 {
		t.Fatalf("only %d centres and %d olefins checked", centres, olefins)
	}
	t.Logf("%d structures: %d centres and %d olefins agree with RDKit (%d ring olefins RDKit did not honour)", structs, centres, olefins-ringMiss, ringMiss)
}
