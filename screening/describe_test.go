package screening

import (
	"encoding/json"
	"os"
	"reflect"
	"strings"
	"testing"
)

// TestDescriptorsFromStructure checks the ROMP descriptors derived from SMILES for the monomer
// classes of the job. Expected values are structural facts of each molecule (common practice);
// exo/endo is checked against RDKit 3D geometry in TestExoEndoAgainstRDKitGeometry.
func TestDescriptorsFromStructure(t *testing.T) {
	cases := []struct {
		name, smiles string
		ringSize     int
		system       string
		subst        int
		exoEndo      string
		conj         []string
		ewgOlefin    bool
		groups       []string
	}{
		{"norbornene", "C1=CC2CCC1C2", 5, SystemBridged, 2, "", nil, false, nil},
		{"cis-cyclooctene", `C1=C\CCCCCC/1`, 8, SystemMonocyclic, 2, "", nil, false, nil},
		{"cyclopentene", "C1=CCCC1", 5, SystemMonocyclic, 2, "", nil, false, nil},
		{"1-methylcyclopentene", "CC1=CCCC1", 5, SystemMonocyclic, 3, "", nil, false, nil},
		// R083/R084 names: Ivin, Lam, Rooney, Macromol. Chem. Phys. 1994
		{"exo-5-(methoxymethyl)norbornene", "COC[C@@H]1C[C@H]2C=C[C@@H]1C2", 5, SystemBridged, 2, "exo", nil, false, []string{FGEther}},
		{"endo-5-(methoxymethyl)norbornene", "COC[C@@H]1C[C@@H]2C=C[C@H]1C2", 5, SystemBridged, 2, "endo", nil, false, []string{FGEther}},
		// R078 exo,exo diacetate (Bazan et al., Macromolecules 1991); R089 endo,endo diester
		{"exo,exo-diacetate", "CC(=O)O[C@@H]1[C@H](OC(C)=O)[C@H]2C=C[C@@H]1C2", 5, SystemBridged, 2, "exo", nil, false, []string{FGEster}},
		{"endo,endo-diester", "COC(=O)[C@@H]1[C@H](C(=O)OC)[C@@H]2C=C[C@H]1C2", 5, SystemBridged, 2, "endo", nil, false, []string{FGEster}},
		// R059 as written in romp_outcomes.csv has one carbonyl exo and one endo (RDKit 3D
		// embedding agrees), so it is not the all-exo imide its name says
		{"R059 as written", "CN1C(=O)[C@@H]2[C@@H](C1=O)[C@H]1C=C[C@@H]2O1", 5, SystemBridged, 2, "exo,endo", nil, false, []string{FGEther, FGImide}},
		{"endo-dicyclopentadiene", "C1=C[C@@H]2[C@H](C1)[C@@H]1C=C[C@H]2C1", 5, SystemBridged, 2, "endo", nil, false, nil},
		{"2-cyclopentenone", "O=C1C=CCC1", 5, SystemMonocyclic, 2, "", []string{ConjCarbonyl}, true, []string{FGKetone}},
		{"1,3-cyclohexadiene", "C1=CCCC=C1", 6, SystemMonocyclic, 2, "", []string{ConjRingOlefin}, false, nil},
		{"1-phenylcyclobutene", "c1ccccc1C1=CCC1", 4, SystemMonocyclic, 3, "", []string{ConjAromatic}, false, nil},
		{"cyclobutene ester (R008)", "COC(=O)C1=CCC1", 4, SystemMonocyclic, 3, "", []string{ConjCarbonyl}, true, []string{FGEster}},
		{"bicyclo[4.2.0]octene (fused)", "C1=CC2CCCCC12", 4, SystemFused, 2, "", nil, false, nil},
		{"spiro cyclopentene ketal", "C1=CC2(CC1)OCCO2", 5, SystemSpiro, 2, "", nil, false, []string{FGEther}},
		{"norbornene amine (R094)", "NCC1CC2C=CC1C2", 5, SystemBridged, 2, "", nil, false, []string{FGPrimaryAmine}},
		{"TMP imide (R093)", "CC1(C)CC(N2C(=O)[C@@H]3[C@H](C2=O)[C@@H]2C=C[C@H]3C2)CC(C)(C)N1", 5, SystemBridged, 2, "endo", nil, false, []string{FGHinderedAmine, FGImide}},
		{"thioacetate (R099)", "CC(=O)SCC1CC2C=CC1C2", 5, SystemBridged, 2, "", nil, false, []string{FGThioester}},
		{"2,3-dihydrofuran", "C1=COCC1", 5, SystemMonocyclic, 2, "", nil, false, []string{FGCyclicEnolEther, FGEther}},
		{"ODAN (R063)", "CCOC(=O)N1C2C=CC(O2)N1C(=O)OCC", 5, SystemBridged, 2, "", nil, false, []string{FGCarbamate, FGEther}},
		{"ammonium salt", "[NH3+]CC1CC2C=CC1C2.[Cl-]", 5, SystemBridged, 2, "", nil, false, []string{FGAmmonium}},
		{"vinyl norbornene (R079)", "C=CC1CC2C=CC1C2", 5, SystemBridged, 2, "", nil, false, []string{FGTerminalOlefin}},
	}
	for _, c := range cases {
		s, err := Describe(c.smiles)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		r, err := ScreenStructure(s, DefaultConditions())
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		d := r.Descriptors
		if d.RingSize != c.ringSize || d.RingSystem != c.system || d.OlefinSubstitution != c.subst || d.ExoEndo != c.exoEndo || d.EWGOnOlefin != c.ewgOlefin {
			t.Errorf("%s: ring %d %s, substitution %d, exo/endo %q, ewg on olefin %v; want %d %s, %d, %q, %v",
				c.name, d.RingSize, d.RingSystem, d.OlefinSubstitution, d.ExoEndo, d.EWGOnOlefin, c.ringSize, c.system, c.subst, c.exoEndo, c.ewgOlefin)
		}
		if !sameSet(d.ConjugatedWith, c.conj) {
			t.Errorf("%s: conjugated with %v, want %v", c.name, d.ConjugatedWith, c.conj)
		}
		if !sameSet(d.FunctionalGroups, c.groups) {
			t.Errorf("%s: groups %v, want %v", c.name, d.FunctionalGroups, c.groups)
		}
	}
}

func sameSet(a, b []string) bool {
	if len(a) == 0 && len(b) == 0 {
		return true
	}
	x := append([]string(nil), a...)
	y := append([]string(nil), b...)
	sortStrings(x)
	sortStrings(y)
	return reflect.DeepEqual(x, y)
}

func sortStrings(x []string) {
	for i := 1; i < len(x); i++ {
		for j := i; j > 0 && x[j] < x[j-1]; j-- {
			x[j], x[j-1] = x[j-1], x[j]
		}
	}
}

// TestSeveralRingOlefins: dicyclopentadiene, 1,5-cyclooctadiene and norbornadiene are screened
// on their most reactive olefin and report the others (common practice: the norbornene olefin
// of dicyclopentadiene opens first, Rule & Moore, Macromolecules 2002, 35, 7878).
func TestSeveralRingOlefins(t *testing.T) {
	for _, c := range []struct {
		smiles   string
		ringSize int
		others   int
	}{
		{"C1=CC2C(C1)C1C=CC2C1", 5, 1},
		{"C1=CCCC=CCC1", 8, 1},
		{"C1=CC2C=CC1C2", 5, 1},
	} {
		r, err := ScreenSMILES(c.smiles, DefaultConditions())
		if err != nil {
			t.Fatal(err)
		}
		if r.Descriptors.RingSize != c.ringSize || len(r.Descriptors.OtherRingOlefins) != c.others {
			t.Errorf("%s: ring %d with %d others, want %d with %d", c.smiles, r.Descriptors.RingSize, len(r.Descriptors.OtherRingOlefins), c.ringSize, c.others)
		}
	}
	r, _ := ScreenSMILES("C1=CC2C(C1)C1C=CC2C1", DefaultConditions())
	if r.Descriptors.RingSystem != SystemBridged {
		t.Errorf("dicyclopentadiene screened on its %s olefin, want the bridged (norbornene) one", r.Descriptors.RingSystem)
	}
}

func TestSaltsAndCounterIons(t *testing.T) {
	r, err := ScreenSMILES("[NH3+]CC1CC2C=CC1C2.[Cl-]", DefaultConditions())
	if err != nil {
		t.Fatal(err)
	}
	if r.Descriptors.Formula != "C8H14N+" || len(r.Descriptors.CounterIons) != 1 || r.Descriptors.CounterIons[0] != "Cl-" {
		t.Errorf("formula %s, counter-ions %v", r.Descriptors.Formula, r.Descriptors.CounterIons)
	}
	found := false
	for _, rs := range r.Reasons {
		if rs.Code == "counter_ion" {
			found = true
		}
	}
	if !found {
		t.Error("no counter_ion reason")
	}
}

func TestNotAMonomer(t *testing.T) {
	for _, smi := range []string{"c1ccccc1", "C1CCCCC1", "C=CCCCCC=C", "CC#CC", "C1=CC=CC=C1"} {
		r, err := ScreenSMILES(smi, DefaultConditions())
		if err != nil {
			t.Fatal(err)
		}
		if r.Verdict != VerdictNotMonomer || r.Thermo != nil || r.Score != 0 {
			t.Errorf("%s: verdict %s, thermo %v, score %v", smi, r.Verdict, r.Thermo, r.Score)
		}
		if !strings.Contains(r.Reasons[0].Detail, ":") {
			t.Errorf("%s: reason does not say why: %s", smi, r.Reasons[0].Detail)
		}
	}
}

func TestMolfileMatchesSMILES(t *testing.T) {
	// norbornene as a V2000 molfile (2D coordinates irrelevant)
	mol := `norbornene
  ringsieve

  7  8  0  0  0  0  0  0  0  0999 V2000
    0.0000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0
    1.0000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0
    1.5000    1.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0
    1.0000    2.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0
    0.0000    2.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0
   -0.5000    1.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0
    0.5000    1.0000    1.0000 C   0  0  0  0  0  0  0  0  0  0  0  0
  1  2  2  0
  2  3  1  0
  3  4  1  0
  4  5  1  0
  5  6  1  0
  6  1  1  0
  3  7  1  0
  6  7  1  0
M  END`
	a, err := ScreenMolfile(mol, DefaultConditions())
	if err != nil {
		t.Fatal(err)
	}
	b, _ := ScreenSMILES("C1=CC2CCC1C2", DefaultConditions())
	if a.Descriptors.Formula != "C7H10" || a.Verdict != b.Verdict || a.Descriptors.SkeletonKey != b.Descriptors.SkeletonKey {
		t.Errorf("molfile: %s %s %s; SMILES: %s %s", a.Descriptors.Formula, a.Verdict, a.Descriptors.SkeletonKey, b.Verdict, b.Descriptors.SkeletonKey)
	}
}

// TestSkeletonKeyIndependentOfWriting: one skeleton written several ways gets one key.
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
			k := s.Olefins[0].D.SkeletonKey
			if key == "" {
				key = k
			} else if k != key {
				t.Errorf("%s: key %s, but %s gave %s", smi, k, g[0], key)
			}
		}
	}
}

// TestExoEndoAgainstRDKitGeometry compares exo/endo from the SMILES stereo marks with the side of
// the substituents in RDKit 3D embeddings (testdata/gen/gen_exo_endo.py writes the reference).
func TestExoEndoAgainstRDKitGeometry(t *testing.T) {
	b, err := os.ReadFile("../testdata/reference/rdkit_exo_endo.jsonl")
	if err != nil {
		t.Fatal(err)
	}
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
			if o.D.RingSystem == SystemBridged && len(o.CoreRings) >= 2 {
				best = o
				break
			}
		}
		norm := func(x string) string {
			p := strings.Split(x, ",")
			sortStrings(p)
			return strings.Join(p, ",")
		}
		if norm(best.D.ExoEndo) != norm(ref.ExoEndo) {
			t.Errorf("%s: %q, RDKit geometry %q", ref.SMILES, best.D.ExoEndo, ref.ExoEndo)
		}
		n++
	}
	if n < 15 {
		t.Fatalf("only %d reference structures", n)
	}
}

// TestFunctionalGroupInventory: one norbornene-type monomer per group of the inventory the
// catalyst rules use (group definitions are textbook organic chemistry: common practice).
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
