package depict

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"ringsieve/screening/mol"
)

// SVGOptions sets the size and marks of a drawing.
type SVGOptions struct {
	// Width and Height bound the picture in pixels (the drawing is scaled to fit, centred);
	// zero: 300 × 200.
	Width, Height int
	// MaxBond caps the bond length in pixels so that small molecules are not blown up (0: a
	// fifth of the smaller side).
	MaxBond float64
	// HighlightBonds and HighlightAtoms are drawn over a pale band (the ring olefin that opens).
	HighlightBonds []int
	HighlightAtoms []int
	// Title is the accessible name of the picture (<title>), e.g. the SMILES.
	Title string
}

// element colours (a common convention: carbon black, oxygen red, nitrogen blue, ...)
var atomColour = map[int]string{7: "#2040c0", 8: "#d02010", 9: "#208020", 15: "#d07000", 16: "#a08000", 17: "#208020", 35: "#902010", 53: "#600090", 5: "#c06060", 14: "#606060"}

// SVG renders the drawing as a standalone SVG document: Kekulé bonds (second lines of ring
// double bonds inside the ring), wedge and hash bonds, element symbols with implicit hydrogens
// on heteroatoms, charges, isotopes, and highlighted bonds and atoms. It uses presentation
// attributes only (no style attributes), so pages under a strict content security policy can
// show it inline.
func (l *Layout) SVG(o SVGOptions) []byte {
	m := l.Mol
	if o.Width <= 0 {
		o.Width = 300
	}
	if o.Height <= 0 {
		o.Height = 200
	}
	if o.MaxBond <= 0 {
		o.MaxBond = float64(min(o.Width, o.Height)) / 5
	}
	minX, maxX, minY, maxY := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for _, p := range l.P {
		minX, maxX = math.Min(minX, p.X), math.Max(maxX, p.X)
		minY, maxY = math.Min(minY, p.Y), math.Max(maxY, p.Y)
	}
	if len(l.P) == 0 {
		minX, maxX, minY, maxY = 0, 0, 0, 0
	}
	pad := 0.9 // bond lengths of margin for labels
	w, h := maxX-minX+2*pad, maxY-minY+2*pad
	s := math.Min(float64(o.Width)/w, float64(o.Height)/h)
	s = math.Min(s, o.MaxBond)
	ox := (float64(o.Width) - (maxX-minX)*s) / 2
	oy := (float64(o.Height) - (maxY-minY)*s) / 2
	// y up in the layout, down on screen
	xy := func(p Point) (float64, float64) { return ox + (p.X-minX)*s, oy + (maxY-p.Y)*s }

	label := make([]string, len(m.Atoms))
	for a := range m.Atoms {
		label[a] = atomLabel(m, a)
	}
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%d" height="%d" viewBox="0 0 %d %d" role="img">`, o.Width, o.Height, o.Width, o.Height)
	if o.Title != "" {
		fmt.Fprintf(&b, "<title>%s</title>", escapeXML(o.Title))
	}
	fmt.Fprintf(&b, `<rect width="%d" height="%d" fill="#ffffff"/>`, o.Width, o.Height)
	lw := math.Max(1, s*0.045)
	// highlights under everything
	if len(o.HighlightBonds)+len(o.HighlightAtoms) > 0 {
		fmt.Fprintf(&b, `<g stroke="#f2c94c" stroke-width="%s" stroke-linecap="round" fill="#f2c94c">`, num(s*0.24))
		for _, bi := range o.HighlightBonds {
			if bi < 0 || bi >= len(m.Bonds) {
				continue
			}
			x1, y1 := xy(l.P[m.Bonds[bi].A])
			x2, y2 := xy(l.P[m.Bonds[bi].B])
			fmt.Fprintf(&b, `<line x1="%s" y1="%s" x2="%s" y2="%s"/>`, num(x1), num(y1), num(x2), num(y2))
		}
		for _, a := range o.HighlightAtoms {
			if a < 0 || a >= len(m.Atoms) {
				continue
			}
			x, y := xy(l.P[a])
			fmt.Fprintf(&b, `<circle cx="%s" cy="%s" r="%s" stroke="none"/>`, num(x), num(y), num(s*0.16))
		}
		b.WriteString(`</g>`)
	}
	fmt.Fprintf(&b, `<g stroke="#000000" stroke-width="%s" stroke-linecap="round" fill="#000000">`, num(lw))
	for bi, bd := range m.Bonds {
		p1, p2 := l.P[bd.A], l.P[bd.B]
		// shorten at labelled atoms
		d := p2.sub(p1)
		ln := d.len()
		if ln < 1e-6 {
			continue
		}
		u := d.scale(1 / ln)
		if label[bd.A] != "" {
			p1 = p1.add(u.scale(0.32))
		}
		if label[bd.B] != "" {
			p2 = p2.sub(u.scale(0.32))
		}
		if l.Wedge[bi] != 0 {
			from, to := p1, p2
			if l.WedgeFrom[bi] == bd.B {
				from, to = p2, p1
			}
			writeWedge(&b, xy, from, to, l.Wedge[bi] > 0, s)
			continue
		}
		line := func(a, c Point) {
			x1, y1 := xy(a)
			x2, y2 := xy(c)
			fmt.Fprintf(&b, `<line x1="%s" y1="%s" x2="%s" y2="%s"/>`, num(x1), num(y1), num(x2), num(y2))
		}
		nrm := u.rot(math.Pi / 2)
		switch bd.Order {
		case mol.BondDouble:
			if side, ok := l.ringSide(bi); ok && label[bd.A] == "" && label[bd.B] == "" {
				// ring double bond: the main line on the bond, the second inside, shorter
				line(p1, p2)
				off := nrm.scale(side * 0.18)
				line(p1.add(u.scale(0.15)).add(off), p2.sub(u.scale(0.15)).add(off))
			} else {
				off := nrm.scale(0.09)
				line(p1.add(off), p2.add(off))
				line(p1.sub(off), p2.sub(off))
			}
		case mol.BondTriple:
			off := nrm.scale(0.14)
			line(p1, p2)
			line(p1.add(off), p2.add(off))
			line(p1.sub(off), p2.sub(off))
		default:
			line(p1, p2)
		}
	}
	b.WriteString(`</g>`)
	// labels
	fs := math.Max(8, s*0.5)
	fmt.Fprintf(&b, `<g font-family="sans-serif" font-size="%s" text-anchor="middle" dominant-baseline="central">`, num(fs))
	for a, t := range label {
		if t == "" {
			continue
		}
		x, y := xy(l.P[a])
		col := atomColour[m.Atoms[a].Z]
		if col == "" {
			col = "#000000"
		}
		fmt.Fprintf(&b, `<text x="%s" y="%s" fill="%s">%s</text>`, num(x), num(y), col, labelMarkup(m, a, t, l.hLeft(a), fs))
	}
	b.WriteString(`</g></svg>`)
	return []byte(b.String())
}

// ringSide returns +1 or -1: the side of bond bi (left or right of A→B) where its smallest ring
// lies, judged by the ring neighbours' positions; ok is false for an acyclic bond.
func (l *Layout) ringSide(bi int) (float64, bool) {
	if l.ringBondSize == nil || l.ringBondSize[bi] == 0 {
		return 0, false
	}
	m := l.Mol
	bd := m.Bonds[bi]
	// the ring lies on the side of the neighbours of A and B that are ring atoms
	sum := 0.0
	for _, end := range []int{bd.A, bd.B} {
		for _, x := range m.NeighborAtoms(end) {
			if x == bd.A || x == bd.B {
				continue
			}
			xb := m.BondBetween(end, x)
			if l.ringBondSize[xb] == 0 {
				continue
			}
			sum += cross2(l.P[bd.A], l.P[bd.B], l.P[x])
		}
	}
	if sum == 0 {
		return 0, false
	}
	if sum > 0 {
		return 1, true
	}
	return -1, true
}

// hLeft reports whether an atom's hydrogens are written to the left of its symbol (its bonds
// point right).
func (l *Layout) hLeft(a int) bool {
	sx := 0.0
	for _, x := range l.Mol.NeighborAtoms(a) {
		sx += l.P[x].X - l.P[a].X
	}
	return sx > 0.3
}

func writeWedge(b *strings.Builder, xy func(Point) (float64, float64), from, to Point, solid bool, s float64) {
	d := to.sub(from)
	nrm := d.norm().rot(math.Pi / 2).scale(0.14)
	if solid {
		x1, y1 := xy(from)
		x2, y2 := xy(to.add(nrm))
		x3, y3 := xy(to.sub(nrm))
		fmt.Fprintf(b, `<polygon points="%s,%s %s,%s %s,%s" stroke-width="0.5"/>`, num(x1), num(y1), num(x2), num(y2), num(x3), num(y3))
		return
	}
	n := 6
	for k := 1; k <= n; k++ {
		f := float64(k) / float64(n)
		c := from.add(d.scale(f))
		w := nrm.scale(f)
		x1, y1 := xy(c.add(w))
		x2, y2 := xy(c.sub(w))
		fmt.Fprintf(b, `<line x1="%s" y1="%s" x2="%s" y2="%s" stroke-width="%s"/>`, num(x1), num(y1), num(x2), num(y2), num(math.Max(0.8, s*0.035)))
	}
}

// atomLabel is the symbol shown at atom a, or "" for a plain skeletal carbon.
func atomLabel(m *mol.Molecule, a int) string {
	at := m.Atoms[a]
	e := mol.ElementByZ(at.Z)
	sym := "*"
	if e != nil {
		sym = e.Symbol
	}
	if at.Z == 6 && at.Charge == 0 && at.Isotope == 0 && m.Degree(a) > 0 {
		return ""
	}
	return sym
}

// labelMarkup writes the symbol with its hydrogens, isotope and charge as SVG text.
func labelMarkup(m *mol.Molecule, a int, sym string, hLeft bool, fs float64) string {
	at := m.Atoms[a]
	var b strings.Builder
	sup := func(t string) {
		fmt.Fprintf(&b, `<tspan dy="%s" font-size="%s">%s</tspan><tspan dy="%s"></tspan>`, num(-fs*0.35), num(fs*0.7), t, num(fs*0.35))
	}
	sub := func(t string) {
		fmt.Fprintf(&b, `<tspan dy="%s" font-size="%s">%s</tspan><tspan dy="%s"></tspan>`, num(fs*0.3), num(fs*0.7), t, num(-fs*0.3))
	}
	h := at.HCount // hydrogens written as atoms are drawn as atoms
	hs := func() {
		if h == 0 {
			return
		}
		b.WriteString("H")
		if h > 1 {
			sub(strconv.Itoa(h))
		}
	}
	if at.Isotope != 0 {
		sup(strconv.Itoa(at.Isotope))
	}
	if hLeft {
		hs()
		b.WriteString(sym)
	} else {
		b.WriteString(sym)
		hs()
	}
	if at.Charge != 0 {
		c := ""
		if abs(at.Charge) > 1 {
			c = strconv.Itoa(abs(at.Charge))
		}
		if at.Charge > 0 {
			c += "+"
		} else {
			c += "−"
		}
		sup(c)
	}
	return b.String()
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

func num(f float64) string { return strconv.FormatFloat(f, 'f', 1, 64) }

func escapeXML(s string) string {
	return strings.NewReplacer("&", "&amp;", "<", "&lt;", ">", "&gt;", `"`, "&quot;").Replace(s)
}
