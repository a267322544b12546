package molfile

import (
	"fmt"
	"io"
	"strings"

	"ringsieve/screening/mol"
)

// Written holds what Write puts into a molfile besides the connection table.
type Written struct {
	// Title is the name line (its first 80 characters; line breaks become spaces).
	Title string
	// Comment is the third header line (first 80 characters).
	Comment string
	// Coords holds 3 coordinates per atom in Å (nil writes zeros); ThreeD marks them as 3-D.
	Coords []float64
	ThreeD bool
	// Wedge marks bonds of a 2-D drawing: +1 wedge (towards the viewer), -1 hash (away), 0
	// plain; the bond is written starting at WedgeFrom (its narrow end). Nil: no marks.
	Wedge     []int8
	WedgeFrom []int
	// Either marks double bonds whose geometry is not specified (written "either", so that a
	// reader does not take it from the drawing's coordinates). Nil: none.
	Either []bool
}

// chargeCodes maps a formal charge to the atom-block charge field of a V2000 molfile.
var chargeCodes = map[int]int{3: 1, 2: 2, 1: 3, -1: 5, -2: 6, -3: 7}

// Write writes m as one V2000 molfile (no trailing "$$$$"): atoms with explicit hydrogens as
// they stand in m (implicit hydrogens are left to the reader's valence rules), Kekulé bond
// orders, charges and isotopes in the atom block and in M  CHG / M  ISO lines. Errors: a
// molecule over 999 atoms or bonds (the V2000 limit), an atom without an element, coordinates of
// the wrong length, or the writer's error.
func Write(w io.Writer, m *mol.Molecule, o Written) error {
	na, nb := len(m.Atoms), len(m.Bonds)
	if na > 999 || nb > 999 {
		return fmt.Errorf("%d atoms and %d bonds: V2000 molfiles hold at most 999 of each", na, nb)
	}
	if o.Coords != nil && len(o.Coords) != 3*na {
		return fmt.Errorf("%d coordinates for %d atoms", len(o.Coords), na)
	}
	var b strings.Builder
	line := func(s string) {
		if len(s) > 80 {
			s = s[:80]
		}
		b.WriteString(s)
		b.WriteByte('\n')
	}
	line(strings.NewReplacer("\n", " ", "\r", " ").Replace(o.Title))
	dim := "2D"
	if o.ThreeD {
		dim = "3D"
	}
	line("  ringsiev          " + dim)
	line(strings.NewReplacer("\n", " ", "\r", " ").Replace(o.Comment))
	line(fmt.Sprintf("%3d%3d  0  0  0  0  0  0  0  0999 V2000", na, nb))
	var chg, iso [][2]int
	for i, a := range m.Atoms {
		sym := "*" // a wildcard atom of the SMILES
		if a.Z != 0 {
			e := mol.ElementByZ(a.Z)
			if e == nil {
				return fmt.Errorf("atom %d has no element (Z %d)", i+1, a.Z)
			}
			sym = e.Symbol
		}
		var x, y, z float64
		if o.Coords != nil {
			x, y, z = o.Coords[3*i], o.Coords[3*i+1], o.Coords[3*i+2]
		}
		// a bracket atom's hydrogens are as written, not the reader's valence default: say so
		// with the valence field (total bond order plus hydrogens; 15 means zero)
		val := 0
		if a.Bracket && a.Z != 1 {
			val = m.BondOrderSum(i) + a.HCount
			if val == 0 {
				val = 15
			}
		}
		line(fmt.Sprintf("%10.4f%10.4f%10.4f %-3s 0%3d  0  0  0%3d  0  0  0  0  0  0", x, y, z, sym, chargeCodes[a.Charge], val))
		if a.Charge != 0 {
			chg = append(chg, [2]int{i + 1, a.Charge})
		}
		if a.Isotope != 0 {
			iso = append(iso, [2]int{i + 1, a.Isotope})
		}
	}
	for bi, bd := range m.Bonds {
		order := bd.Order
		if order < 1 || order > 3 {
			order = 1
		}
		a, b, stereo := bd.A, bd.B, 0
		if o.Wedge != nil && o.Wedge[bi] != 0 {
			stereo = 1 // wedge
			if o.Wedge[bi] < 0 {
				stereo = 6 // hash
			}
			if o.WedgeFrom != nil && o.WedgeFrom[bi] == b {
				a, b = b, a
			}
		}
		if o.Either != nil && o.Either[bi] && order == 2 {
			stereo = 3
		}
		line(fmt.Sprintf("%3d%3d%3d%3d", a+1, b+1, order, stereo))
	}
	for _, group := range []struct {
		tag  string
		vals [][2]int
	}{{"CHG", chg}, {"ISO", iso}} {
		for k := 0; k < len(group.vals); k += 8 {
			part := group.vals[k:min(k+8, len(group.vals))]
			s := fmt.Sprintf("M  %s%3d", group.tag, len(part))
			for _, v := range part {
				s += fmt.Sprintf(" %3d %3d", v[0], v[1])
			}
			line(s)
		}
	}
	line("M  END")
	_, err := io.WriteString(w, b.String())
	return err
}
