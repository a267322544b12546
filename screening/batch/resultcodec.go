package batch

import (
	"bytes"
	"compress/flate"
	"context"
	_ "embed"
	"fmt"
	"io"
	"sync"

	"ringsieve/screening"
	"ringsieve/screening/units"
)

// Job results are stored compressed: DEFLATE (level 2, the fastest with a preset dictionary)
// with a dictionary of two typical screen results (result_dict.json), so that a result of about
// 3.7 kB of JSON stores in about 600 bytes and several fit in one database page. Writing a fraction of the bytes
// is what lets a large job's storage keep pace with its screening. A compressed value starts
// with resultMarkV1; values stored by earlier versions (plain JSON, starting with '{') read as
// they are. The dictionary is part of the storage format: never edit it — add a new one with
// a new mark and keep reading the old.

//go:embed result_dict.json
var resultDictV1 []byte

var resultMarkV1 = []byte{0, 'd', '1'}

var flaters = sync.Pool{New: func() any {
	w, err := flate.NewWriterDict(nil, 2, resultDictV1) // level 2: the fastest that uses a dictionary
	if err != nil {
		panic(err) // 2 is a valid level
	}
	return w
}}

// Fast-tier results are not stored at all: screening a structure in the table tier is
// deterministic and costs about 20 µs, less than compressing and storing its result, so a job
// stores only the rank key and the CSV fields and a download screens the item again
// (Recompute). The mark records the engine version that screened it; a download by another
// version says so in the result's engine_version.

// Recomputable reports whether an item's result is recomputed on download rather than stored:
// a structure given inline (not a stored monomer, which may change) screened in the table tier.
func Recomputable(src ItemSource, c screening.Conditions) bool {
	return src.MonomerID == "" && c.ThermoMethod == units.ThermoTable
}

// RecomputeMark is the stored form of a recomputable result.
func RecomputeMark() []byte { return append([]byte{0, 'r'}, screening.EngineVersion...) }

// IsRecomputeMark reports whether a stored result is to be recomputed.
func IsRecomputeMark(b []byte) bool { return bytes.HasPrefix(b, []byte{0, 'r'}) }

// Recompute screens a stored item again under the job's conditions and returns its JSON result.
func Recompute(ctx context.Context, src ItemSource, c screening.Conditions) ([]byte, error) {
	u := reuses.Get().(*screening.Reuse) // the result is encoded before u is used again
	defer reuses.Put(u)
	res, err := screening.ScreenWith(ctx, u, screening.Source{SMILES: src.SMILES, Molfile: src.Molfile, Descriptors: src.Descriptors}, c)
	if err != nil {
		return nil, err
	}
	return res.AppendJSON(make([]byte, 0, 4096))
}

// EncodeResult returns the stored form of a JSON result (workers encode, so that the store's
// single writer only writes).
func EncodeResult(b []byte) []byte {
	var buf bytes.Buffer
	buf.Grow(len(b)/4 + 16)
	buf.Write(resultMarkV1)
	w := flaters.Get().(*flate.Writer)
	w.Reset(&buf)
	w.Write(b)
	w.Close()
	flaters.Put(w)
	return buf.Bytes()
}

// DecodeResult returns the JSON of a stored result (plain JSON is returned as it is).
func DecodeResult(b []byte) ([]byte, error) {
	if !bytes.HasPrefix(b, resultMarkV1) {
		return b, nil
	}
	r := flate.NewReaderDict(bytes.NewReader(b[len(resultMarkV1):]), resultDictV1)
	defer r.Close()
	out, err := io.ReadAll(r)
	if err != nil {
		return nil, fmt.Errorf("stored result: %w", err)
	}
	return out, nil
}
