package forcefield

import (
	"bufio"
	"embed"
	"fmt"
	"strconv"
	"strings"
	"sync"
)

// The MMFF94 and MMFF94s parameter tables, embedded with their original headers (data/*.par).
// They are the tables of T. A. Halgren, J. Comput. Chem. 1996, 17, 490–519 (I), 520–552 (II),
// 553–586 (III, parameter tables in its supplementary material), 587–615 (IV), 616–641 (V), and
// for MMFF94s (changed out-of-plane and torsion tables) J. Comput. Chem. 1999, 20, 720–729.
//
//go:embed data/*.par
var parFS embed.FS

// Variant selects the parameter set.
type Variant int

// Variants of the force field.
const (
	MMFF94 Variant = iota
	MMFF94s
)

func (v Variant) String() string {
	if v == MMFF94s {
		return "mmff94s"
	}
	return "mmff94"
}

// ParseVariant reads "mmff94" or "mmff94s".
func ParseVariant(s string) (Variant, error) {
	switch strings.ToLower(s) {
	case "mmff94", "":
		return MMFF94, nil
	case "mmff94s":
		return MMFF94s, nil
	}
	return 0, fmt.Errorf("unknown force-field variant %q (mmff94 or mmff94s)", s)
}

// maxType bounds the numeric MMFF atom types (1 … 99).
const maxType = 100

// typeProp is one row of mmffprop.par: element, coordination, valence, lone pair, multiple-bond
// and aromatic flags of an atom type.
type typeProp struct {
	z, crd, val, pilp, mltb int
	arom, lin, sbmb         bool
	ok                      bool
}

type vdwParam struct {
	alpha, n, a, g float64
	da             byte // 'D' donor, 'A' acceptor, '-' neither
	ok             bool
}

type bondParam struct{ kb, r0 float64 }
type angleParam struct{ ka, theta0 float64 }
type sbParam struct{ kIJK, kKJI float64 }
type torParam struct{ v1, v2, v3 float64 }

type key3 [3]int
type key4 [4]int
type key5 [5]int

// params holds the tables of one variant.
type params struct {
	prop  [maxType]typeProp
	equiv [maxType][5]int // mmffdef: the type at equivalence levels 1 … 5 (level 5: the wildcard 0)
	vdw   [maxType]vdwParam
	pbci  [maxType]float64
	fcadj [maxType]float64
	hasPB [maxType]bool

	bond  map[key3]bondParam   // bond type, I ≤ J
	bndk  map[[2]int]bondParam // empirical-rule reference r0 and kb by atomic numbers (Z1 ≤ Z2)
	angle map[key4]angleParam  // angle type, I ≤ K, J
	stbn  map[key4]sbParam     // stretch-bend type, I, J, K as listed
	dfsb  map[key3]sbParam     // default stretch-bend by periodic-table rows
	oop   map[key4]float64     // I, J (central), K, L with I ≤ K ≤ L
	tor   map[key5]torParam    // torsion type, I, J, K, L as canonically ordered
	chg   map[key3]float64     // bond type, I < J: charge increment
}

var (
	loadOnce sync.Once
	tables   [2]*params
	loadErr  error
)

// tablesFor returns the parameter tables of a variant, loading them once.
func tablesFor(v Variant) (*params, error) {
	loadOnce.Do(func() {
		base, err := loadParams("mmfftor.par", "mmffoop.par")
		if err != nil {
			loadErr = err
			return
		}
		s, err := loadParams("mmffs_tor.par", "mmffs_oop.par")
		if err != nil {
			loadErr = err
			return
		}
		tables[MMFF94], tables[MMFF94s] = base, s
	})
	if loadErr != nil {
		return nil, loadErr
	}
	return tables[v], nil
}

// rows reads the data lines of a parameter file: lines starting with '*' or '$' are comments.
func rows(name string) ([][]string, error) {
	f, err := parFS.Open("data/" + name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var out [][]string
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		l := sc.Text()
		if l == "" || l[0] == '*' || l[0] == '$' {
			continue
		}
		if f := strings.Fields(l); len(f) > 0 {
			out = append(out, f)
		}
	}
	return out, sc.Err()
}

// table reads a file whose rows start with n integers followed by m floats.
func table(name string, n, m int, fn func(ints []int, vals []float64, rest []string)) error {
	rs, err := rows(name)
	if err != nil {
		return err
	}
	for i, r := range rs {
		if len(r) < n+m {
			return fmt.Errorf("%s row %d: %d fields, want at least %d", name, i+1, len(r), n+m)
		}
		ints := make([]int, n)
		vals := make([]float64, m)
		for k := 0; k < n; k++ {
			v, err := strconv.Atoi(r[k])
			if err != nil {
				return fmt.Errorf("%s row %d field %d: %w", name, i+1, k+1, err)
			}
			ints[k] = v
		}
		for k := 0; k < m; k++ {
			v, err := strconv.ParseFloat(r[n+k], 64)
			if err != nil {
				return fmt.Errorf("%s row %d field %d: %w", name, i+1, n+k+1, err)
			}
			vals[k] = v
		}
		fn(ints, vals, r[n+m:])
	}
	return nil
}

func checkType(ts ...int) error {
	for _, t := range ts {
		if t < 0 || t >= maxType {
			return fmt.Errorf("atom type %d out of range", t)
		}
	}
	return nil
}

func loadParams(torFile, oopFile string) (*params, error) {
	p := &params{bond: map[key3]bondParam{}, bndk: map[[2]int]bondParam{}, angle: map[key4]angleParam{},
		stbn: map[key4]sbParam{}, dfsb: map[key3]sbParam{}, oop: map[key4]float64{}, tor: map[key5]torParam{}, chg: map[key3]float64{}}
	var bad error
	note := func(err error) {
		if err != nil && bad == nil {
			bad = err
		}
	}
	steps := []error{
		table("mmffprop.par", 9, 0, func(x []int, _ []float64, _ []string) {
			if note(checkType(x[0])); bad == nil {
				p.prop[x[0]] = typeProp{z: x[1], crd: x[2], val: x[3], pilp: x[4], mltb: x[5], arom: x[6] != 0, lin: x[7] != 0, sbmb: x[8] != 0, ok: true}
			}
		}),
		defTable(p),
		table("mmffvdw.par", 1, 4, func(x []int, v []float64, rest []string) {
			if note(checkType(x[0])); bad == nil {
				da := byte('-')
				if len(rest) > 0 {
					da = rest[0][0]
				}
				p.vdw[x[0]] = vdwParam{alpha: v[0], n: v[1], a: v[2], g: v[3], da: da, ok: true}
			}
		}),
		table("mmffpbci.par", 2, 2, func(x []int, v []float64, _ []string) {
			if note(checkType(x[1])); bad == nil {
				p.pbci[x[1]], p.fcadj[x[1]], p.hasPB[x[1]] = v[0], v[1], true
			}
		}),
		table("mmffbond.par", 3, 2, func(x []int, v []float64, _ []string) {
			p.bond[key3{x[0], min(x[1], x[2]), max(x[1], x[2])}] = bondParam{kb: v[0], r0: v[1]}
		}),
		table("mmffbndk.par", 2, 2, func(x []int, v []float64, _ []string) {
			p.bndk[[2]int{min(x[0], x[1]), max(x[0], x[1])}] = bondParam{r0: v[0], kb: v[1]}
		}),
		table("mmffang.par", 4, 2, func(x []int, v []float64, _ []string) {
			p.angle[key4{x[0], min(x[1], x[3]), x[2], max(x[1], x[3])}] = angleParam{ka: v[0], theta0: v[1]}
		}),
		table("mmffstbn.par", 4, 2, func(x []int, v []float64, _ []string) {
			p.stbn[key4{x[0], x[1], x[2], x[3]}] = sbParam{kIJK: v[0], kKJI: v[1]}
		}),
		table("mmffdfsb.par", 3, 2, func(x []int, v []float64, _ []string) {
			p.dfsb[key3{x[0], x[1], x[2]}] = sbParam{kIJK: v[0], kKJI: v[1]}
		}),
		table(oopFile, 4, 1, func(x []int, v []float64, _ []string) {
			p.oop[oopKey(x[0], x[1], x[2], x[3])] = v[0]
		}),
		table(torFile, 5, 3, func(x []int, v []float64, _ []string) {
			p.tor[torKey(x[0], x[1], x[2], x[3], x[4])] = torParam{v1: v[0], v2: v[1], v3: v[2]}
		}),
		table("mmffchg.par", 3, 1, func(x []int, v []float64, _ []string) {
			p.chg[key3{x[0], x[1], x[2]}] = v[0]
		}),
	}
	for _, err := range steps {
		if err != nil {
			return nil, err
		}
	}
	if bad != nil {
		return nil, bad
	}
	return p, nil
}

// defTable reads mmffdef.par: symbol, type and the type at levels 1 … 4 (level 5 is 0). The
// symbols themselves are read by symbolTypes.
func defTable(p *params) error {
	rs, err := rows("mmffdef.par")
	if err != nil {
		return err
	}
	for i, r := range rs {
		if len(r) < 6 {
			return fmt.Errorf("mmffdef.par row %d: %d fields", i+1, len(r))
		}
		var v [6]int
		for k := 1; k < 6; k++ {
			if v[k], err = strconv.Atoi(r[k]); err != nil {
				return fmt.Errorf("mmffdef.par row %d: %w", i+1, err)
			}
		}
		if err := checkType(v[1]); err != nil {
			return err
		}
		p.equiv[v[1]] = [5]int{v[1], v[2], v[3], v[4], v[5]}
	}
	return nil
}

// symbolTypes maps MMFF symbolic atom types to numeric ones (mmffdef.par, including the
// commented alternative symbols, which share the numeric type of their row).
var symbolTypes = sync.OnceValues(func() (map[string]int, error) {
	f, err := parFS.Open("data/mmffdef.par")
	if err != nil {
		return nil, err
	}
	defer f.Close()
	out := map[string]int{}
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		l := strings.TrimPrefix(sc.Text(), "*")
		fs := strings.Fields(l)
		if len(fs) < 6 {
			continue
		}
		t, err := strconv.Atoi(fs[1])
		if err != nil {
			continue // a header line
		}
		if _, err := strconv.Atoi(fs[2]); err != nil {
			continue
		}
		if _, dup := out[fs[0]]; !dup {
			out[fs[0]] = t
		}
	}
	return out, sc.Err()
})

func oopKey(i, j, k, l int) key4 {
	o := [3]int{i, k, l}
	if o[0] > o[1] {
		o[0], o[1] = o[1], o[0]
	}
	if o[1] > o[2] {
		o[1], o[2] = o[2], o[1]
	}
	if o[0] > o[1] {
		o[0], o[1] = o[1], o[0]
	}
	return key4{o[0], j, o[1], o[2]}
}

// torKey orders a torsion so that J ≤ K, and I ≤ L when J == K (the table's canonical order).
func torKey(tt, i, j, k, l int) key5 {
	if j > k || (j == k && i > l) {
		i, j, k, l = l, k, j, i
	}
	return key5{tt, i, j, k, l}
}
