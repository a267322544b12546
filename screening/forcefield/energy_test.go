package forcefield

import (
	"math"
	"testing"

	"ringsieve/screening/molfile"
)

// TestGradientMatchesFiniteDifferences checks the analytic gradient of every term against
// central differences (step 1e-5 Å) on every seventh reference structure, at the reference
// geometry and at a randomly displaced one (so that no term sits at its minimum).
func TestGradientMatchesFiniteDifferences(t *testing.T) {
	refs := loadMMFFRefs(t)
	checked := 0
	for n, r := range refs {
		if n%7 != 0 {
			continue
		}
		rec, err := molfile.ParseRecord(r.Molblock)
		if err != nil {
			continue
		}
		s, err := Setup(rec.Mol, MMFF94)
		if err != nil {
			continue
		}
		x := make([]float64, 0, 3*len(rec.Coords))
		for _, c := range rec.Coords {
			x = append(x, c[0], c[1], c[2])
		}
		// a deterministic displacement of up to 0.05 Å per coordinate
		y := append([]float64(nil), x...)
		for k := range y {
			y[k] += 0.05 * math.Sin(float64(7*k+n))
		}
		for _, pos := range [][]float64{x, y} {
			g := make([]float64, len(pos))
			e := s.Gradient(pos, g)
			if d := math.Abs(e - s.Energy(pos)); d > 1e-9*math.Max(1, math.Abs(e)) {
				t.Fatalf("%s: Gradient returns energy %.9f, Energy %.9f", r.ID, e, s.Energy(pos))
			}
			const h = 1e-5
			p := append([]float64(nil), pos...)
			for k := range p {
				p[k] = pos[k] + h
				ep := s.Energy(p)
				p[k] = pos[k] - h
				em := s.Energy(p)
				p[k] = pos[k]
				fd := (ep - em) / (2 * h)
				if math.Abs(fd-g[k]) > 1e-3+1e-4*math.Abs(fd) {
					t.Errorf("%s %s: ∂E/∂x[%d] analytic %.6f, finite difference %.6f", r.ID, r.SMILES, k, g[k], fd)
					break
				}
			}
		}
		checked++
	}
	if checked < 150 {
		t.Fatalf("only %d structures checked", checked)
	}
	t.Logf("gradient checked on %d structures at two geometries each", checked)
}
