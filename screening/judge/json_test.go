package judge

import (
	"encoding/json"
	"math"
	"reflect"
	"strings"
	"testing"

	"ringsieve/screening/describe"
	"ringsieve/screening/thermo"
)

// TestJSONFieldsListed: every JSON member of the result types is in jsonFields, in field
// order, so a field added to a type without a line in AppendJSON fails here (design choice:
// AppendJSON must stay byte-equal to encoding/json).
func TestJSONFieldsListed(t *testing.T) {
	for _, v := range []any{Result{}, Reason{}, Compatibility{}, ConditionsOut{}, thermo.Thermo{}, thermo.EstimateOut{},
		thermo.MeasuredOut{}, describe.OlefinSummary{}, describe.Descriptors{}} {
		typ := reflect.TypeOf(v)
		var names []string
		for i := 0; i < typ.NumField(); i++ {
			tag := typ.Field(i).Tag.Get("json")
			name, _, _ := strings.Cut(tag, ",")
			if name == "-" {
				continue
			}
			if name == "" {
				t.Errorf("%s.%s has no JSON name", typ.Name(), typ.Field(i).Name)
			}
			names = append(names, name)
		}
		if got := jsonFields[typ.Name()]; strings.Join(got, " ") != strings.Join(names, " ") {
			t.Errorf("%s: AppendJSON writes %v, the type has %v", typ.Name(), got, names)
		}
	}
}

// TestJSONStringsAndNumbers: strings and numbers come out as encoding/json writes them, for
// the awkward cases (control characters, HTML characters, invalid UTF-8, the two JavaScript
// line separators, exponents, negative zero); NaN is refused as encoding/json refuses it.
func TestJSONStringsAndNumbers(t *testing.T) {
	for _, s := range []string{"", "plain", "ΔH_p ≈ -62 kJ/mol (200–500 K) → ok", "a\"b\\c", "tab\tnew\nline\rcr\bbs\fff",
		"\x00\x01\x1f\x7f", "<b>&amp;</b>", "bad \xff\xfe utf-8 \xe2\x82", "line\u2028para\u2029end", "\u00e9\U0001F600"} {
		want, _ := json.Marshal(s)
		if got := appendJSONString(nil, s); string(got) != string(want) {
			t.Errorf("string %q: got %s, want %s", s, got, want)
		}
	}
	for _, f := range []float64{0, math.Copysign(0, -1), 1, -1, 0.1, 1.0 / 3, 1e-6, 9.999999e-7, 1e-7, 8.195650603361379e-8,
		1.5e-10, 1e-100, 123456789.125, 1e20, 1e21, -1e21, 1.7976931348623157e308, 5e-324, 298.15, -62.1228} {
		want, _ := json.Marshal(f)
		var w jsonWriter
		w.float(f)
		if string(w.b) != string(want) || w.err != nil {
			t.Errorf("number %v: got %s (%v), want %s", f, w.b, w.err, want)
		}
	}
	var w jsonWriter
	if w.float(math.NaN()); w.err == nil {
		t.Error("NaN: no error")
	}
	r := Result{Score: math.Inf(1)}
	if _, err := r.AppendJSON(nil); err == nil {
		t.Error("an infinite score: no error")
	}
}
