package molfile

import "testing"

func TestMolfileErrorsByLine(t *testing.T) {
	cases := []struct {
		text string
		line int
	}{
		{"x\n\n\n  2  1  0  0  0  0  0  0  0  0999 V2000\n    0.0 0.0 0.0 C\n", 6},
		{"x\n\n\n  1  0  0  0  0  0  0  0  0  0999 V2000\n    0.0000    0.0000    0.0000 Xx  0  0\nM  END\n", 5},
		{"x\n\n\n  2  1  0  0  0  0  0  0  0  0999 V2000\n    0.0000    0.0000    0.0000 C   0  0\n    0.0000    0.0000    0.0000 C   0  0\n  1  3  1  0\nM  END\n", 7},
		{"x\n\n\n  0  0  0  0  0  0  0  0  0  0999 V3000\nM  END\n", 4},
	}
	for _, c := range cases {
		_, _, err := Parse(c.text)
		me, ok := err.(*Error)
		if !ok || me.Line != c.line {
			t.Errorf("%q: %v, want line %d", c.text, err, c.line)
		}
	}
}
