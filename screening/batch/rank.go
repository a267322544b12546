package batch

import (
	"encoding/binary"
	"math"
	"sort"

	"ringsieve/screening"
)

// The ranking rule, the one place it is written: screened items first, by score descending,
// then ΔG_p ascending (an item without thermodynamics after every item with one at the same
// score); items that failed, or are not screened yet, after every screened item; ties in
// submission order. The rule is a byte key so that the stores can order by it without
// restating it (job results are sorted by their stored key, then sequence).

// KeyLen is the length of a rank key.
const KeyLen = 17

// Key is the rank key of one item; smaller keys rank first (compare with bytes.Compare).
type Key [KeyLen]byte

// KeyOf returns the rank key of a screened result.
func KeyOf(r *screening.Result) Key {
	dg := math.Inf(1)
	if r.Thermo != nil {
		dg = r.Thermo.DGkJmol
	}
	return ScoreKey(r.Score, dg)
}

// ScoreKey returns the rank key of a screened item from its score and ΔG_p in kJ/mol (+Inf when
// it has no thermodynamics).
func ScoreKey(score, dg float64) Key {
	var k Key
	binary.BigEndian.PutUint64(k[1:9], sortable(-score))
	binary.BigEndian.PutUint64(k[9:17], sortable(dg))
	return k
}

// FailedKey is the rank key of an item that could not be screened (and of one still pending).
func FailedKey() Key {
	var k Key
	k[0] = 1
	return k
}

// Less reports whether key a ranks before key b (equal keys keep submission order).
func Less(a, b Key) bool { return Compare(a, b) < 0 }

// Compare orders keys as bytes.Compare orders their bytes (−1, 0, +1), reading them as a byte
// and two big-endian words: the ranking of a large list compares keys about 40 times per item.
func Compare(a, b Key) int {
	a0, a1, a2 := a.Words()
	b0, b1, b2 := b.Words()
	return CompareWords(a0, a1, a2, b0, b1, b2)
}

// CompareWords is Compare of two keys read as Words: the one place their order is written, for
// lists that keep the words instead of the keys.
func CompareWords(a0 byte, a1, a2 uint64, b0 byte, b1, b2 uint64) int {
	// a word is compared only when the ones before are equal
	var less bool
	switch {
	case a0 != b0:
		less = a0 < b0
	case a1 != b1:
		less = a1 < b1
	case a2 != b2:
		less = a2 < b2
	default:
		return 0
	}
	if less {
		return -1
	}
	return 1
}

// Words reads k as its first byte and two big-endian words, whose order (in that sequence) is
// the keys' byte order: what a list that compares keys many times keeps instead of the bytes.
func (k Key) Words() (first byte, w1, w2 uint64) {
	return k[0], binary.BigEndian.Uint64(k[1:9]), binary.BigEndian.Uint64(k[9:17])
}

// sortable maps a float64 to a uint64 whose unsigned order is the numeric order (−0 and +0 map
// alike).
func sortable(x float64) uint64 {
	if x == 0 {
		x = 0 // −0 ranks as +0
	}
	b := math.Float64bits(x)
	if b>>63 == 1 {
		return ^b
	}
	return b | 1<<63
}

// Row is one item's place in a ranking: its submission sequence, the result or the error, and
// its rank key.
type Row struct {
	Seq    int
	Result *screening.Result
	Err    error
	Key    Key
}

// NewRow builds the row of item seq from a screening's outcome.
func NewRow(seq int, r screening.Result, err error) Row {
	if err != nil {
		return Row{Seq: seq, Err: err, Key: FailedKey()}
	}
	return Row{Seq: seq, Result: &r, Key: KeyOf(&r)}
}

// Rank orders rows by the ranking rule (rank key, then submission sequence).
func Rank(rows []Row) {
	sort.Slice(rows, func(i, j int) bool {
		if c := Compare(rows[i].Key, rows[j].Key); c != 0 {
			return c < 0
		}
		return rows[i].Seq < rows[j].Seq
	})
}
