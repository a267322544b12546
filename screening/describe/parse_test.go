package describe

import (
	"errors"
	"testing"

	"ringsieve/screening/smiles"
)

func TestDoubleBondGeometry(t *testing.T) {
	cases := []struct {
		smiles string
		trans  bool
	}{
		{`C1=C\CCCCCC/1`, false},
		{`C1=C/CCCCCC/1`, true},
		{`C/1=C/CCCCCC1`, false},
		{`C\1=C/CCCCCC1`, true},
		{`CCCC/C1=C\CCCCCC1`, true}, // R043 trans-1-butylcyclooctene (Farrell & Beers, ACS Macro Lett. 2017)
		{`C/C1=C/CCCCCC1`, false},   // R044 cis-1-methylcyclooctene (from memory in the reference)
		{`C1=CCCCCCC1`, false},      // unspecified: read as cis
	}
	for _, c := range cases {
		s, err := Describe(c.smiles)
		if err != nil {
			t.Fatal(err)
		}
		if got := s.Olefins[0].Desc.TransOlefin; got != c.trans {
			t.Errorf("%s: trans = %v, want %v", c.smiles, got, c.trans)
		}
	}
}

func TestSMILESErrorPositions(t *testing.T) {
	cases := []struct {
		smiles string
		pos    int
	}{
		{"", 0},
		{"C1CC", 1},
		{"C(C", 1},
		{"CC)", 2},
		{"C==C", 2},
		{"[Xx]", 1},
		{"C1CCCC2", 1}, // the first ring bond left open
		{"c1cccc1", 0},
		{"C(C)(C)(C)(C)C", 0},
		{"C%1", 1},
		{"(C)", 0},
		{"C.", 2},
		{"C-", 1},
		{"[C", 0},
		{"C]", 1},
		{"C()C", 2},
		{"C1CC1C1", 6},
		{"C=1CCCCC#1", 9},
		{"[CH4+20]", 7},
		{"Cé", 1},
		{"OO=O", 1}, // the oxygen with three bonds
	}
	for _, c := range cases {
		_, err := Describe(c.smiles)
		var se *smiles.Error
		if !errors.As(err, &se) {
			t.Errorf("%q: error %v, want a SMILES error", c.smiles, err)
			continue
		}
		if !errors.Is(err, smiles.ErrSMILES) {
			t.Errorf("%q: error does not match ErrSMILES", c.smiles)
		}
		if se.Pos != c.pos {
			t.Errorf("%q: position %d (%s), want %d", c.smiles, se.Pos, se.Msg, c.pos)
		}
	}
}
