package depict

import (
	"bytes"
	"math"
	"testing"

	"ringsieve/screening/rings"
	"ringsieve/screening/smiles"
)

// FuzzDepict: any SMILES the parser takes is drawn without a panic, with finite coordinates,
// and written as SVG and as a molfile.
func FuzzDepict(f *testing.F) {
	for _, s := range []string{"C1=CC2CCC1C2", "C1=C/CCCCCC/1", "N[C@@H](C)C(=O)O", "[Na+].[O-]C(=O)C1CC2C=CC1C2",
		"C12C3C4C1C1C2C3C41", "C1CC2(CC1)CCC=C2", "F/C=C/Cl", "C#CC#C", "C=C=C", "[H][H]", "C"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		m, err := smiles.Parse(s)
		if err != nil {
			return
		}
		l := Compute(m, rings.Perceive(m))
		for i, p := range l.P {
			if math.IsNaN(p.X) || math.IsNaN(p.Y) || math.IsInf(p.X, 0) || math.IsInf(p.Y, 0) {
				t.Fatalf("%q: atom %d at %v", s, i, p)
			}
		}
		if svg := l.SVG(SVGOptions{}); !bytes.HasPrefix(svg, []byte("<svg")) {
			t.Fatalf("%q: not an SVG", s)
		}
		var b bytes.Buffer
		if len(m.Atoms) <= 999 && len(m.Bonds) <= 999 {
			if err := l.WriteMolfile(&b, s); err != nil {
				t.Fatalf("%q: molfile: %v", s, err)
			}
		}
	})
}
