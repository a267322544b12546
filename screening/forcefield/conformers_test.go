package forcefield

import (
	"bufio"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"
	"time"

	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/smiles"
)

// confRef is one line of testdata/reference/rdkit_conformers.jsonl (testdata/gen/gen_conformers.py):
// RDKit's lowest MMFF94 energy over 300 ETKDG conformers with the stereo kept.
type confRef struct {
	ID        string  `json:"id"`
	SMILES    string  `json:"smiles"`
	Heavy     int     `json:"heavy_atoms"`
	MinEnergy float64 `json:"min_energy_kcal_mol"`
	Seconds   float64 `json:"seconds"`
}

func loadConfRefs(t testing.TB) []confRef {
	path := os.Getenv("RINGSIEVE_CONF_REF") // a partial file while the reference is regenerated
	if path == "" {
		path = reftest.Path(t, "reference/rdkit_conformers.jsonl")
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatalf("reference file missing (regenerate with testdata/gen/gen_conformers.py): %v", err)
	}
	defer f.Close()
	var out []confRef
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		var r confRef
		if err := json.Unmarshal(sc.Bytes(), &r); err != nil {
			t.Fatal(err)
		}
		if r.SMILES != "" {
			out = append(out, r)
		}
	}
	return out
}

// TestConformerSearchAgainstRDKit runs the conformer search on the 100 monomer-like reference
// structures: the lowest energy found must be within 0.5 kcal/mol of (or below) the lowest of
// RDKit's 300-conformer embedding with MMFF94 optimization for at least 95 % of them, and every
// conformer returned must keep the stereo of its SMILES.
func TestConformerSearchAgainstRDKit(t *testing.T) {
	refs := loadConfRefs(t)
	if len(refs) < 100 && os.Getenv("RINGSIEVE_CONF_REF") == "" {
		t.Fatalf("%d reference structures, want 100", len(refs))
	}
	if testing.Short() {
		refs = refs[:len(refs)/4]
	}
	ok, lower := 0, 0
	var misses []string
	var ours, theirs float64
	for _, r := range refs {
		m, err := smiles.Parse(r.SMILES)
		if err != nil {
			t.Fatal(err)
		}
		start := time.Now()
		res, err := Search(context.Background(), m, SearchOptions{Seed: 7})
		if err != nil {
			t.Errorf("%s %s: %v", r.ID, r.SMILES, err)
			continue
		}
		ours += time.Since(start).Seconds()
		theirs += r.Seconds
		for k, c := range res.Conformers {
			if bc, bo := res.Stereo.StereoViolations(c.X); len(bc)+len(bo) > 0 {
				t.Errorf("%s %s: conformer %d lost stereo (%d centres, %d olefins)", r.ID, r.SMILES, k+1, len(bc), len(bo))
			}
		}
		d := res.Conformers[0].EnergyKcalMol - r.MinEnergy
		if d <= 0.5 {
			ok++
			if d < -0.01 {
				lower++
			}
		} else {
			misses = append(misses, fmt.Sprintf("%s %s: %.3f vs RDKit %.3f (+%.2f; %d minimizations)", r.ID, r.SMILES,
				res.Conformers[0].EnergyKcalMol, r.MinEnergy, d, res.Minimizations))
		}
	}
	share := float64(ok) / float64(len(refs))
	t.Logf("%d of %d within 0.5 kcal/mol of RDKit's best (%d lower); search %.1f s in all, RDKit's 300-conformer runs %.1f s as recorded",
		ok, len(refs), lower, ours, theirs)
	if len(misses) > 0 {
		t.Logf("above RDKit's best by more than 0.5 kcal/mol:\n%s", strings.Join(misses, "\n"))
	}
	if share < 0.95 {
		t.Errorf("%.1f%% within 0.5 kcal/mol, want ≥ 95%%", 100*share)
	}
	_ = math.Abs
}
