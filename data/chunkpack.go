package data

import (
	"encoding/binary"
	"errors"
	"fmt"

	"ringsieve/screening/batch"
)

// A job's items and outcomes are stored packed, one row per chunk (job_chunk_items.items,
// job_chunk_results.rank_keys and .results) instead of one row per item: per-row work in the
// database (a B-tree insert per item and index, a read-back through the index, foreign-key
// probes) cost about as much as screening an item of the fast tier. The packing is our own,
// versioned by a leading byte where it has one:
//
//	items:   'i' 1, then per item in sequence order:
//	         str item id, uvarint input line, str source (JSON, batch.DecodeItemSource),
//	         uvarint number of extra columns, str each
//	rank_keys: per item in sequence order its rank key (batch.KeyLen bytes; batch.FailedKey for
//	         an item without an outcome, which ranks it last as a pending item)
//	results: 'r' 1, then per outcome: uvarint seq − first seq, str verdict, byte failed (0/1),
//	         str stored result (batch.EncodeResult form, or a JSON item error), str CSV summary
//
// where str is a uvarint length and that many bytes. Outcomes of a chunk are stored with its
// completion; a chunk carried over from earlier versions may hold some before it is done.

// errBadPack marks a packed chunk that cannot be read (a damaged database).
var errBadPack = errors.New("packed job chunk unreadable")

const (
	itemsPackV1   = 'i'
	resultsPackV1 = 'r'
)

func putStr(b []byte, s string) []byte {
	b = binary.AppendUvarint(b, uint64(len(s)))
	return append(b, s...)
}

// itemPacker gathers encoded items until they are taken a chunk at a time.
type itemPacker struct {
	buf   []byte // encoded items, no header
	ends  []int  // end offset in buf of each item
	taken int    // items already taken (the first ends[taken−1] bytes of buf)
}

func (p *itemPacker) add(it JobInput) error {
	if smilesOnly(it.Source) {
		if n, ok := smilesSourceLen(it.Source.SMILES); ok { // written in place: no copy made
			b := p.head(it.ItemID, it.Line, n)
			b = appendSMILESSource(b, it.Source.SMILES, n)
			p.tail(b, it.Extra)
			return nil
		}
	}
	src, err := encodeSource(it.Source)
	if err != nil {
		return err
	}
	p.addEncoded(it.ItemID, it.Line, src, it.Extra)
	return nil
}

// addEncoded adds an item whose source is already encoded (batch.DecodeItemSource reads it).
// It and add's in-place path write the packed item format through head and tail, the one place
// it is written.
func (p *itemPacker) addEncoded(id string, line int, src []byte, extra []string) {
	p.tail(append(p.head(id, line, len(src)), src...), extra)
}

// head appends an item's id, line and the length of its source, which the caller appends next.
func (p *itemPacker) head(id string, line, srcLen int) []byte {
	b := putStr(p.buf, id)
	b = binary.AppendUvarint(b, uint64(max(line, 0)))
	return binary.AppendUvarint(b, uint64(srcLen))
}

// tail appends an item's extra columns after its source and ends the item.
func (p *itemPacker) tail(b []byte, extra []string) {
	b = binary.AppendUvarint(b, uint64(len(extra)))
	for _, e := range extra {
		b = putStr(b, e)
	}
	p.buf = b
	p.ends = append(p.ends, len(b))
}

// take removes the next n items and returns them packed.
func (p *itemPacker) take(n int) []byte {
	start := 0
	if p.taken > 0 {
		start = p.ends[p.taken-1]
	}
	end := p.ends[p.taken+n-1]
	items := make([]byte, 0, end-start+2)
	items = append(items, itemsPackV1, 1)
	items = append(items, p.buf[start:end]...)
	p.taken += n
	if p.taken == len(p.ends) { // all taken: start again at the front
		p.buf, p.ends, p.taken = p.buf[:0], p.ends[:0], 0
	}
	return items
}

// pendingKey is the rank key of an item without an outcome (it ranks it last, with the failed).
var pendingKey = batch.FailedKey()

// pendingKeys is the keys column of n items without outcomes.
func pendingKeys(n int) []byte {
	b := make([]byte, 0, n*batch.KeyLen)
	for range n {
		b = append(b, pendingKey[:]...)
	}
	return b
}

// unpack reads packed fields in order; the first error sticks.
type unpack struct {
	b   []byte
	err error
}

func (u *unpack) uvarint() uint64 {
	if u.err != nil {
		return 0
	}
	v, n := binary.Uvarint(u.b)
	if n <= 0 {
		u.err = errBadPack
		return 0
	}
	u.b = u.b[n:]
	return v
}

func (u *unpack) bytes() []byte {
	n := u.uvarint()
	if u.err != nil {
		return nil
	}
	if n > uint64(len(u.b)) {
		u.err = errBadPack
		return nil
	}
	v := u.b[:n:n]
	u.b = u.b[n:]
	return v
}

func (u *unpack) byte() byte {
	if u.err != nil {
		return 0
	}
	if len(u.b) == 0 {
		u.err = errBadPack
		return 0
	}
	v := u.b[0]
	u.b = u.b[1:]
	return v
}

// header checks the version bytes.
func (u *unpack) header(kind byte) {
	if len(u.b) < 2 || u.b[0] != kind || u.b[1] != 1 {
		u.err = fmt.Errorf("%w: unknown packing", errBadPack)
		return
	}
	u.b = u.b[2:]
}

// packedItem is one item read from a packed chunk; its strings alias the packed bytes.
type packedItem struct {
	id     []byte
	line   int
	source []byte
	extra  []string
}

// unpackItems reads the n items of a packed chunk.
func unpackItems(b []byte, n int) ([]packedItem, error) {
	u := unpack{b: b}
	u.header(itemsPackV1)
	out := make([]packedItem, n)
	for i := range out {
		it := &out[i]
		it.id = u.bytes()
		it.line = int(u.uvarint())
		it.source = u.bytes()
		ne := u.uvarint()
		if ne > uint64(len(u.b)) {
			u.err = errBadPack
		}
		if u.err != nil {
			break
		}
		it.extra = make([]string, ne) // an empty list, as the JSON decoder gives
		for k := range it.extra {
			it.extra[k] = string(u.bytes())
		}
	}
	if u.err == nil && len(u.b) != 0 {
		u.err = fmt.Errorf("%w: %d bytes after the last item", errBadPack, len(u.b))
	}
	if u.err != nil {
		return nil, u.err
	}
	return out, nil
}

// packedOutcome is one stored outcome of a packed chunk; its slices alias the packed bytes.
type packedOutcome struct {
	seq     int // within the chunk (seq − first seq)
	verdict []byte
	failed  bool
	result  []byte
	summary []byte
}

// outcomeIndex returns, per item of a chunk of n, the index of its outcome in outs, or −1.
func outcomeIndex(outs []packedOutcome, n int) []int32 {
	idx := make([]int32, n)
	for i := range idx {
		idx[i] = -1
	}
	for i, o := range outs {
		idx[o.seq] = int32(i)
	}
	return idx
}

// appendOutcome appends one outcome to a results column (started with newResults).
func appendOutcome(b []byte, off int, o batch.Outcome) []byte {
	b = binary.AppendUvarint(b, uint64(off))
	b = putStr(b, o.Verdict)
	f := byte(0)
	if o.Failed {
		f = 1
	}
	b = append(b, f)
	b = binary.AppendUvarint(b, uint64(len(o.Result)))
	b = append(b, o.Result...)
	return putStr(b, o.Summary)
}

func newResults(capacity int) []byte {
	return append(make([]byte, 0, capacity), resultsPackV1, 1)
}

// unpackResults reads a results column (nil: no outcomes) of a chunk of n items.
func unpackResults(b []byte, n int) ([]packedOutcome, error) {
	if b == nil {
		return nil, nil
	}
	u := unpack{b: b}
	u.header(resultsPackV1)
	var out []packedOutcome
	for u.err == nil && len(u.b) > 0 {
		var o packedOutcome
		off := u.uvarint()
		o.verdict = u.bytes()
		o.failed = u.byte() == 1
		o.result = u.bytes()
		o.summary = u.bytes()
		if u.err == nil && off >= uint64(n) {
			u.err = fmt.Errorf("%w: outcome for item %d of %d", errBadPack, off, n)
		}
		o.seq = int(off)
		out = append(out, o)
	}
	if u.err != nil {
		return nil, u.err
	}
	return out, nil
}

// checkKeys checks that a keys column holds n keys.
func checkKeys(b []byte, n int) error {
	if len(b) != n*batch.KeyLen {
		return fmt.Errorf("%w: %d bytes of rank keys for %d items", errBadPack, len(b), n)
	}
	return nil
}
