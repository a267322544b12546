package screening_test

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"reflect"
	"sort"
	"strings"
	"testing"

	. "ringsieve/screening"
	"ringsieve/screening/canon"
	"ringsieve/screening/describe"
	"ringsieve/screening/rings"
	"ringsieve/screening/thermo"
	"ringsieve/screening/units"
)

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
		{"norbornene", "C1=CC2CCC1C2", 5, describe.SystemBridged, 2, "", nil, false, nil},
		{"cis-cyclooctene", `C1=C\CCCCCC/1`, 8, describe.SystemMonocyclic, 2, "", nil, false, nil},
		{"cyclopentene", "C1=CCCC1", 5, describe.SystemMonocyclic, 2, "", nil, false, nil},
		{"1-methylcyclopentene", "CC1=CCCC1", 5, describe.SystemMonocyclic, 3, "", nil, false, nil},
		// R083/R084 names: Ivin, Lam, Rooney, Macromol. Chem. Phys. 1994
		{"exo-5-(methoxymethyl)norbornene", "COC[C@@H]1C[C@H]2C=C[C@@H]1C2", 5, describe.SystemBridged, 2, "exo", nil, false, []string{describe.FGEther}},
		{"endo-5-(methoxymethyl)norbornene", "COC[C@@H]1C[C@@H]2C=C[C@H]1C2", 5, describe.SystemBridged, 2, "endo", nil, false, []string{describe.FGEther}},
		// R078 exo,exo diacetate (Bazan et al., Macromolecules 1991); R089 endo,endo diester
		{"exo,exo-diacetate", "CC(=O)O[C@@H]1[C@H](OC(C)=O)[C@H]2C=C[C@@H]1C2", 5, describe.SystemBridged, 2, "exo", nil, false, []string{describe.FGEster}},
		{"endo,endo-diester", "COC(=O)[C@@H]1[C@H](C(=O)OC)[C@@H]2C=C[C@H]1C2", 5, describe.SystemBridged, 2, "endo", nil, false, []string{describe.FGEster}},
		// R059 as written in romp_outcomes.csv has one carbonyl exo and one endo (RDKit 3D
		// embedding agrees), so it is not the all-exo imide its name says
		{"R059 as written", "CN1C(=O)[C@@H]2[C@@H](C1=O)[C@H]1C=C[C@@H]2O1", 5, describe.SystemBridged, 2, "exo,endo", nil, false, []string{describe.FGEther, describe.FGImide}},
		{"endo-dicyclopentadiene", "C1=C[C@@H]2[C@H](C1)[C@@H]1C=C[C@H]2C1", 5, describe.SystemBridged, 2, "endo", nil, false, nil},
		{"2-cyclopentenone", "O=C1C=CCC1", 5, describe.SystemMonocyclic, 2, "", []string{describe.ConjCarbonyl}, true, []string{describe.FGKetone}},
		{"1,3-cyclohexadiene", "C1=CCCC=C1", 6, describe.SystemMonocyclic, 2, "", []string{describe.ConjRingOlefin}, false, nil},
		{"1-phenylcyclobutene", "c1ccccc1C1=CCC1", 4, describe.SystemMonocyclic, 3, "", []string{describe.ConjAromatic}, false, nil},
		{"cyclobutene ester (R008)", "COC(=O)C1=CCC1", 4, describe.SystemMonocyclic, 3, "", []string{describe.ConjCarbonyl}, true, []string{describe.FGEster}},
		{"bicyclo[4.2.0]octene (fused)", "C1=CC2CCCCC12", 4, describe.SystemFused, 2, "", nil, false, nil},
		{"spiro cyclopentene ketal", "C1=CC2(CC1)OCCO2", 5, describe.SystemSpiro, 2, "", nil, false, []string{describe.FGEther}},
		{"norbornene amine (R094)", "NCC1CC2C=CC1C2", 5, describe.SystemBridged, 2, "", nil, false, []string{describe.FGPrimaryAmine}},
		{"TMP imide (R093)", "CC1(C)CC(N2C(=O)[C@@H]3[C@H](C2=O)[C@@H]2C=C[C@H]3C2)CC(C)(C)N1", 5, describe.SystemBridged, 2, "endo", nil, false, []string{describe.FGHinderedAmine, describe.FGImide}},
		{"thioacetate (R099)", "CC(=O)SCC1CC2C=CC1C2", 5, describe.SystemBridged, 2, "", nil, false, []string{describe.FGThioester}},
		{"2,3-dihydrofuran", "C1=COCC1", 5, describe.SystemMonocyclic, 2, "", nil, false, []string{describe.FGCyclicEnolEther, describe.FGEther}},
		{"ODAN (R063)", "CCOC(=O)N1C2C=CC(O2)N1C(=O)OCC", 5, describe.SystemBridged, 2, "", nil, false, []string{describe.FGCarbamate, describe.FGEther}},
		{"ammonium salt", "[NH3+]CC1CC2C=CC1C2.[Cl-]", 5, describe.SystemBridged, 2, "", nil, false, []string{describe.FGAmmonium}},
		{"vinyl norbornene (R079)", "C=CC1CC2C=CC1C2", 5, describe.SystemBridged, 2, "", nil, false, []string{describe.FGTerminalOlefin}},
	}
	for _, c := range cases {
		s, err := describe.Describe(c.smiles)
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
	sort.Strings(x)
	sort.Strings(y)
	return reflect.DeepEqual(x, y)
}

func TestSeveralRingOlefins(t *testing.T) {
	// others: distinct other ring olefins listed; equivalent: olefins equivalent to the screened
	// one, counted but not listed (COD's two C=C, norbornadiene's two, cyclooctatetraene's four)
	for _, c := range []struct {
		smiles             string
		ringSize           int
		others, equivalent int
	}{
		{"C1=CC2C(C1)C1C=CC2C1", 5, 1, 0},
		{"C1=CCCC=CCC1", 8, 0, 1},
		{"C1=CC2C=CC1C2", 5, 0, 1},
		{"C1=CC=CC=CC=C1", 8, 0, 3},
	} {
		r, err := ScreenSMILES(c.smiles, DefaultConditions())
		if err != nil {
			t.Fatal(err)
		}
		d := r.Descriptors
		if d.RingSize != c.ringSize || len(d.OtherRingOlefins) != c.others || d.EquivalentRingOlefins != c.equivalent {
			t.Errorf("%s: ring %d with %d others and %d equivalent, want %d with %d and %d", c.smiles, d.RingSize, len(d.OtherRingOlefins), d.EquivalentRingOlefins, c.ringSize, c.others, c.equivalent)
		}
	}
	r, _ := ScreenSMILES("C1=CC2C(C1)C1C=CC2C1", DefaultConditions())
	if r.Descriptors.RingSystem != describe.SystemBridged {
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

// ladderSMILES writes a linear ladder of n fused six-membered rings with an olefin in every
// other ring (a stress input, not a monomer).
func ladderSMILES(n int) string {
	var b strings.Builder
	b.WriteString("C1CCC2")
	for k := 3; k <= n; k++ {
		if k%2 == 1 {
			fmt.Fprintf(&b, "C=C%%%02d", k)
		} else {
			fmt.Fprintf(&b, "CC%%%02d", k)
		}
	}
	fmt.Fprintf(&b, "CCCC=C%%%02d", n)
	for k := n - 1; k > 1; k-- {
		if k%2 == 0 {
			fmt.Fprintf(&b, "C=C%%%02d", k)
		} else {
			fmt.Fprintf(&b, "CC%%%02d", k)
		}
	}
	b.WriteString("C1")
	return b.String()
}

// TestWorkBound: a structure over MaxRingWork is refused with ErrTooComplex before any
// estimate is computed; real polycyclic monomers pass.
func TestWorkBound(t *testing.T) {
	for _, tc := range []struct {
		name, smiles string
		tooComplex   bool
	}{
		{"dicyclopentadiene (common practice: a routine ROMP monomer)", "C1=CC2C3C=CC(C3)C2C1", false},
		{"DCPD trimer-like chain of fused bicycles", strings.Repeat("C1=CC2C3C=CC(C3)C2C1", 10), false},
		{"ladder of 20 fused rings", ladderSMILES(20), false},
		{"ladder of 60 fused rings, 12 olefins analysed", ladderSMILES(60), true},
		{"ladder of 95 fused rings", ladderSMILES(95), true},
	} {
		_, err := ScreenSMILES(tc.smiles, DefaultConditions())
		if got := errors.Is(err, ErrTooComplex); got != tc.tooComplex {
			t.Errorf("%s: error %v, want too complex %v", tc.name, err, tc.tooComplex)
		}
		if tc.tooComplex && (err == nil || !strings.Contains(err.Error(), "limit per structure is 500")) {
			t.Errorf("%s: error %v should name the numbers", tc.name, err)
		}
	}
}

// TestCachesDoNotChangeResults: what a structure gets from caches filled by other structures
// (and from the shipped seeds) equals what it gets computed from scratch — every cache and seed
// keyed by all its value depends on. A sample of the corpus is screened in order with the caches
// growing, then each again with every cache emptied and the seeds off.
func TestCachesDoNotChangeResults(t *testing.T) {
	c := loadCorpus(t)
	cond := DefaultConditions()
	cond.ThermoMethod = units.ThermoTable
	step := 7
	if testing.Short() {
		step = 40
	}
	var sample []string
	for i := 0; i < len(c); i += step {
		sample = append(sample, c[i])
	}
	canon.ResetCache()
	rings.ResetCache()
	thermo.ResetCache()
	warm := make([][]byte, len(sample))
	for i, s := range sample {
		r, err := ScreenSMILES(s, cond)
		if err != nil {
			continue
		}
		warm[i], _ = json.Marshal(r)
	}
	thermo.UseSeeds(false)
	defer thermo.UseSeeds(true)
	for i, s := range sample {
		if warm[i] == nil {
			continue
		}
		canon.ResetCache()
		rings.ResetCache()
		thermo.ResetCache()
		r, err := ScreenSMILES(s, cond)
		if err != nil {
			t.Fatalf("%s: %v from scratch, a result with caches", s, err)
		}
		if cold, _ := json.Marshal(r); !bytes.Equal(cold, warm[i]) {
			t.Errorf("%s: the result with caches differs from the one computed from scratch", s)
		}
	}
}

// TestScreenWithMatchesScreen: a worker that reuses its storage (Reuse) gets, structure after
// structure, the results a screening on storage of its own gives — nothing of one structure's result leaks into
// the next (the corpus in order mixes one and several ring olefins, measured and estimated
// monomers, salts and failures) — under the default and two other condition sets, for SMILES,
// molfile and descriptor sources. Each result is encoded before the next screening, as the
// contract asks.
func TestScreenWithMatchesScreen(t *testing.T) {
	// measured monomers (norbornene, cyclooctene, cyclopentene), a macrocycle (ring–chain), two
	// ring olefins, a salt, no ring olefin and a failure, each between corpus structures
	special := []string{"C1=CC2CCC1C2", "C1=CCCCCCC1", "C1=CCCC1", "C1=CCCCCCCCCCCCCCC1", "C1=CC2CC1C=C2",
		"[Na+].[O-]C(=O)C1CC2C=CC1C2", "CCO", "not a smiles"}
	var corpus []string
	for i, s := range loadCorpus(t)[:3000] {
		corpus = append(corpus, s)
		if i%7 == 0 {
			corpus = append(corpus, special[(i/7)%len(special)])
		}
	}
	hot := DefaultConditions()
	hot.Temp, _ = units.NewTempK(453.15)
	hot.Conc, _ = units.NewConcMolL(0.01)
	bulk := DefaultConditions()
	bulk.Bulk = true
	for _, cond := range []Conditions{DefaultConditions(), hot, bulk} {
		cond.ThermoMethod = units.ThermoTable
		var u Reuse
		for i, s := range corpus {
			src := Source{SMILES: s}
			switch i % 97 {
			case 1: // a molfile of the same structure, as the workers meet them in a mixed file
				if d, err := Depict(s); err == nil {
					var mb strings.Builder
					if d.WriteMolfile(&mb, "reuse") == nil {
						src = Source{Molfile: mb.String()}
					}
				}
			case 2:
				src = Source{Descriptors: &Descriptors{RingSize: 8, RingSystem: describe.SystemMonocyclic, OlefinSubstitution: 2}}
			}
			want, wantErr := screenFresh(src, cond)
			got, gotErr := ScreenWith(context.Background(), &u, src, cond)
			if (wantErr == nil) != (gotErr == nil) || (wantErr != nil && wantErr.Error() != gotErr.Error()) {
				t.Fatalf("%d %q: error %v with reuse, %v without", i, s, gotErr, wantErr)
			}
			if wantErr != nil {
				continue
			}
			wb, err1 := want.AppendJSON(nil)
			gb, err2 := got.AppendJSON(nil)
			if err1 != nil || err2 != nil {
				t.Fatal(err1, err2)
			}
			if !bytes.Equal(wb, gb) {
				t.Fatalf("%d %q: result with reuse differs:\n got %s\nwant %s", i, s, gb, wb)
			}
		}
	}
}

// screenFresh screens src on storage of its own: a new molecule and structure for a SMILES
// (describe.Describe), nothing pooled.
func screenFresh(src Source, cond Conditions) (Result, error) {
	if src.SMILES == "" {
		return Screen(src, cond)
	}
	s, err := describe.Describe(src.SMILES)
	if err != nil {
		return Result{}, err
	}
	return ScreenStructure(s, cond)
}
