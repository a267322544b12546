package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"ringsieve/screening/molfile"
)

// TestCLIForceField runs `forcefield conformers` on the first structure of the conformer
// reference (testdata/reference/rdkit_conformers.jsonl: RDKit's lowest MMFF94 energy over 300
// conformers), reads the SD output back (a 3-D structure with hydrogens and sensible bond
// lengths; lowest energy within 0.5 kcal/mol of RDKit's), and feeds it to `forcefield energy`,
// which must give each conformer's energy again at the written geometry (to the 0.02 kcal/mol
// the four-decimal coordinates allow).
func TestCLIForceField(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	refText, err := os.ReadFile(filepath.Join("testdata", "reference", "rdkit_conformers.jsonl"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		SMILES    string  `json:"smiles"`
		MinEnergy float64 `json:"min_energy_kcal_mol"`
		Heavy     int     `json:"heavy_atoms"`
	}
	if err := json.Unmarshal([]byte(strings.Split(string(refText), "\n")[1]), &ref); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(binPath, "forcefield", "conformers", "--max", "3", ref.SMILES).Output()
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "conf.sdf")
	if err := os.WriteFile(path, out, 0o644); err != nil {
		t.Fatal(err)
	}
	var energies []float64
	err = molfile.ReadSD(bytes.NewReader(out), func(rec molfile.SDRecord) error {
		text, _ := rec.Molfile()
		r, err := molfile.ParseRecord(text)
		if err != nil {
			return err
		}
		if r.Mol.HeavyAtomCount() != ref.Heavy {
			t.Errorf("%d heavy atoms, want %d", r.Mol.HeavyAtomCount(), ref.Heavy)
		}
		for _, b := range r.Mol.Bonds {
			p, q := r.Coords[b.A], r.Coords[b.B]
			d := math.Sqrt((p[0]-q[0])*(p[0]-q[0]) + (p[1]-q[1])*(p[1]-q[1]) + (p[2]-q[2])*(p[2]-q[2]))
			if d < 0.95 || d > 1.65 {
				t.Errorf("bond %d-%d is %.3f Å", b.A+1, b.B+1, d)
			}
		}
		e, err := strconv.ParseFloat(strings.TrimSpace(rec.Fields()["energy_kcal_mol"]), 64)
		if err != nil {
			return err
		}
		energies = append(energies, e)
		return nil
	})
	if err != nil || len(energies) != 3 {
		t.Fatalf("%d conformers read: %v", len(energies), err)
	}
	if energies[0] > ref.MinEnergy+0.5 || energies[0] > energies[1] || energies[1] > energies[2] {
		t.Errorf("energies %v, RDKit's lowest %.4f", energies, ref.MinEnergy)
	}
	ev, err := exec.Command(binPath, "forcefield", "energy", path).Output()
	if err != nil {
		t.Fatal(err)
	}
	sc := bufio.NewScanner(bytes.NewReader(ev))
	k := 0
	for sc.Scan() {
		var line struct {
			Record int                `json:"record"`
			Energy float64            `json:"energy_kcal_mol"`
			Terms  map[string]float64 `json:"terms"`
			Types  []int              `json:"atom_types"`
		}
		if err := json.Unmarshal(sc.Bytes(), &line); err != nil {
			t.Fatal(err)
		}
		if line.Record != k+1 || len(line.Terms) != 7 || len(line.Types) == 0 {
			t.Errorf("record %d: %s", k+1, sc.Text())
		}
		if math.Abs(line.Energy-energies[k]) > 0.02 {
			t.Errorf("record %d: energy at the written geometry %.4f, search %.4f", k+1, line.Energy, energies[k])
		}
		k++
	}
	// a record with implicit hydrogens is reported, not guessed, and the exit status is 2
	bad := "no hydrogens\n  test\n\n  1  0  0  0  0  0  0  0  0  0999 V2000\n    0.0000    0.0000    0.0000 C   0  0\nM  END\n$$$$\n"
	cmd := exec.Command(binPath, "forcefield", "energy", "-")
	cmd.Stdin = strings.NewReader(bad)
	o, err := cmd.Output()
	if ee, ok := err.(*exec.ExitError); !ok || ee.ExitCode() != 2 || !strings.Contains(string(o), `"error"`) {
		t.Fatalf("implicit hydrogens: %v %s", err, o)
	}
}
