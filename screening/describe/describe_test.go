package describe

import (
	"encoding/json"
	"math"
	"slices"
	"sort"
	"strings"
	"testing"

	"ringsieve/screening/internal/reftest"
)

func TestSkeletonKeyIndependentOfWriting(t *testing.T) {
	groups := [][]string{
		{"C1=CC2CCC1C2", "C2CC1CC2C=C1", "C1C2CCC1C=C2"},
		{"C1=CC2C(C1)C1C=CC2C1", "C1C=CC2C1C1CC2C=C1"},
		{"O=C1OC(=O)C2C3C=CC(C3)C12", "C1=CC2CC1C1C2C(=O)OC1=O"},
	}
	for _, g := range groups {
		var key string
		for _, smi := range g {
			s, err := Describe(smi)
			if err != nil {
				t.Fatal(err)
			}
			k := s.Olefins[0].Desc.SkeletonKey
			if key == "" {
				key = k
			} else if k != key {
				t.Errorf("%s: key %s, but %s gave %s", smi, k, g[0], key)
			}
		}
	}
}

func TestExoEndoAgainstRDKitGeometry(t *testing.T) {
	b := reftest.ReadFile(t, "reference/rdkit_exo_endo.jsonl")
	n := 0
	for _, line := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		var ref struct {
			SMILES  string `json:"smiles"`
			ExoEndo string `json:"exo_endo"`
		}
		if err := json.Unmarshal([]byte(line), &ref); err != nil {
			t.Fatal(err)
		}
		s, err := Describe(ref.SMILES)
		if err != nil {
			t.Fatal(err)
		}
		best := s.Olefins[0]
		for _, o := range s.Olefins {
			if o.Desc.RingSystem == SystemBridged && len(o.CoreRings) >= 2 {
				best = o
				break
			}
		}
		norm := func(x string) string {
			p := strings.Split(x, ",")
			sort.Strings(p)
			return strings.Join(p, ",")
		}
		if norm(best.Desc.ExoEndo) != norm(ref.ExoEndo) {
			t.Errorf("%s: %q, RDKit geometry %q", ref.SMILES, best.Desc.ExoEndo, ref.ExoEndo)
		}
		n++
	}
	if n < 15 {
		t.Fatalf("only %d reference structures", n)
	}
}

func TestFunctionalGroupInventory(t *testing.T) {
	nb := func(sub string) string { return sub + "C1CC2C=CC1C2" }
	cases := []struct{ smiles, group string }{
		{nb("OC(=O)"), FGCarboxylicAcid}, {nb("OC"), FGAlcohol}, {nb("Oc1ccc(cc1)"), FGPhenol}, {nb("O=C"), FGAldehyde},
		{nb("CC(=O)"), FGKetone}, {nb("COC(=O)"), FGEster}, {nb("CN(C)C(=O)"), FGAmide}, {"O=C1NC(=O)C2C3C=CC(C3)C12", FGImide},
		{"O=C1OC(=O)C2C3C=CC(C3)C12", FGAnhydride}, {nb("N#C"), FGNitrile}, {nb("NC"), FGPrimaryAmine}, {nb("CNC"), FGSecondaryAmine},
		{nb("CN(C)C"), FGTertiaryAmine}, {nb("[NH3+]C") + ".[Cl-]", FGAmmonium}, {nb("c1ccncc1"), FGPyridineN}, {nb("SC"), FGThiol},
		{nb("CSC"), FGThioether}, {nb("CC(=O)SC"), FGThioester}, {nb("c1ccccc1P(c1ccccc1)C"), FGPhosphine},
		{nb("[BH3-][P+](c1ccccc1)(c1ccccc1)C"), FGPhosphineBorane}, {nb("CS(=O)(=O)C"), FGSulfone}, {nb("NS(=O)(=O)C"), FGSulfonamide},
		{nb("BrC"), FGHalide}, {nb("C[Si](C)(C)OC"), FGSilylEther}, {nb("C=COC"), FGVinylEther}, {nb("C=CC"), FGTerminalOlefin},
		{nb("C#CC"), FGAlkyne}, {nb("CC(C)(C)OC(=O)NC"), FGCarbamate}, {nb("CS(=O)C"), FGSulfoxide}, {nb("COC"), FGEther},
	}
	for _, c := range cases {
		s, err := Describe(c.smiles)
		if err != nil {
			t.Errorf("%s: %v", c.smiles, err)
			continue
		}
		found := false
		for _, g := range s.Groups {
			if g == c.group {
				found = true
			}
		}
		if !found {
			t.Errorf("%s: groups %v lack %s", c.smiles, s.Groups, c.group)
		}
	}
}

func TestBulkConcentration(t *testing.T) {
	s, _ := Describe("C1=CCCC1")
	c, rel, ok := s.BulkConcentration()
	if !ok {
		t.Fatal("no estimate")
	}
	if math.Abs(float64(c)-11.318)/11.318 > rel+0.01 {
		t.Errorf("neat cyclopentene %.2f mol/L, reference 11.318 ± %.0f%%", float64(c), 100*rel)
	}
}

// The conjugation kinds are listed sorted, each at its bit (ConjugatedWith is sorted by name).
func TestConjKindsSorted(t *testing.T) {
	if !slices.IsSorted(conjKinds[:]) {
		t.Errorf("conjugation kinds not sorted: %v", conjKinds)
	}
	for bit, kind := range map[int]string{conjAromaticBit: ConjAromatic, conjCarbonylBit: ConjCarbonyl, conjNitrileBit: ConjNitrile,
		conjOlefinBit: ConjOlefin, conjRingOlefinBit: ConjRingOlefin} {
		if conjKinds[bit] != kind {
			t.Errorf("bit %d is %s, want %s", bit, conjKinds[bit], kind)
		}
	}
}

// TestOlefinsHaveStorageOfTheirOwn: the ring olefins of a structure are distinct, each with its
// own bond and ring size, also when a workspace describes such structures one after another and
// lends its spare olefins again (ring sizes: structure facts, common practice).
func TestOlefinsHaveStorageOfTheirOwn(t *testing.T) {
	var w Workspace
	for _, c := range []struct {
		smiles string
		sizes  []int
	}{
		{"C1=CCC(C1)CC1CC=CCC1CC1CCC=CCCC1", []int{5, 6, 8}},        // cyclopentene, cyclohexene, cyclooctene
		{"C1=CCCC(C1)CC1CCC=CCCC1CC1CC=CC1", []int{5, 6, 8}},        // the same rings in another order
		{"C1=CCC(C1)C1CCC=CC1", []int{5, 6}},                        // fewer olefins after more
		{"C1CC=CCCC1C1CC=CC1CC1C=CCC1CC1CC=CC1", []int{5, 5, 5, 7}}, // four
	} {
		s, err := DescribeInto(&w, c.smiles)
		if err != nil {
			t.Fatalf("%s: %v", c.smiles, err)
		}
		var sizes []int
		bonds := map[int]bool{}
		seen := map[*Olefin]bool{}
		for _, o := range s.Olefins {
			if seen[o] {
				t.Errorf("%s: an olefin is listed twice (shared storage)", c.smiles)
			}
			seen[o] = true
			bonds[o.Bond] = true
			sizes = append(sizes, o.Desc.RingSize)
		}
		slices.Sort(sizes)
		if !slices.Equal(sizes, c.sizes) || len(bonds) != len(c.sizes) {
			t.Errorf("%s: ring sizes %v on %d bonds, want %v on distinct bonds", c.smiles, sizes, len(bonds), c.sizes)
		}
	}
}
