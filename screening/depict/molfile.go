package depict

import (
	"io"

	"ringsieve/screening/mol"
	"ringsieve/screening/molfile"
)

// WriteMolfile writes the drawing as a V2000 molfile: the 2-D coordinates (in ångström-sized
// units: 1.5 per bond, the usual scale of 2-D molfiles), wedge and hash bonds for the
// tetrahedral centres, and acyclic double bonds without written geometry marked "either".
// Errors: those of molfile.Write.
func (l *Layout) WriteMolfile(w io.Writer, title string) error {
	m := l.Mol
	coords := make([]float64, 3*len(m.Atoms))
	for i, p := range l.P {
		coords[3*i], coords[3*i+1] = 1.5*p.X, 1.5*p.Y
	}
	either := make([]bool, len(m.Bonds))
	for bi, b := range m.Bonds {
		if b.Order != mol.BondDouble || l.ringBond(bi) {
			continue
		}
		x, _ := marked(m, b.A, b.B)
		y, _ := marked(m, b.B, b.A)
		either[bi] = x < 0 || y < 0
	}
	return molfile.Write(w, m, molfile.Written{Title: title, Comment: "2-D drawing", Coords: coords,
		Wedge: l.Wedge, WedgeFrom: l.WedgeFrom, Either: either})
}

func (l *Layout) ringBond(bi int) bool { return l.ringBondSize != nil && l.ringBondSize[bi] > 0 }
