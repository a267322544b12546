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

// TestAppendJSONEveryField: a result with every field set (every pointer non-nil, every list
// one element long, strings that need escaping) and the zero result (nil lists written as null)
// encode as encoding/json encodes them, and every JSON member of the result types appears — so
// a field added to a type without its line in AppendJSON fails here (design choice: AppendJSON
// must stay byte-equal to encoding/json).
func TestAppendJSONEveryField(t *testing.T) {
	var full Result
	fill(reflect.ValueOf(&full).Elem())
	for _, r := range []Result{full, {}} {
		want, err := json.Marshal(r)
		if err != nil {
			t.Fatal(err)
		}
		got, err := r.AppendJSON(nil)
		if err != nil || string(got) != string(want) {
			t.Fatalf("AppendJSON differs from encoding/json (%v)\n got  %s\n want %s", err, got, want)
		}
	}
	var members map[string]any
	b, _ := full.AppendJSON(nil)
	if err := json.Unmarshal(b, &members); err != nil {
		t.Fatal(err)
	}
	for _, name := range jsonNames(reflect.TypeOf(Result{})) {
		if _, ok := members[name]; !ok {
			t.Errorf("member %s missing from a fully set result", name)
		}
	}
	for _, typ := range []reflect.Type{reflect.TypeOf(Reason{}), reflect.TypeOf(Compatibility{}), reflect.TypeOf(ConditionsOut{}),
		reflect.TypeOf(thermo.Thermo{}), reflect.TypeOf(thermo.EstimateOut{}), reflect.TypeOf(thermo.MeasuredOut{}),
		reflect.TypeOf(describe.OlefinSummary{}), reflect.TypeOf(describe.Descriptors{})} {
		for _, name := range jsonNames(typ) {
			if !strings.Contains(string(b), `"`+name+`":`) {
				t.Errorf("%s.%s missing from a fully set result", typ.Name(), name)
			}
		}
	}
}

// fill sets every exported field of v to a non-empty value: numbers that are not zero, strings
// with characters JSON escapes, true, one-element lists, pointers to filled values.
func fill(v reflect.Value) {
	switch v.Kind() {
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			if v.Type().Field(i).IsExported() {
				fill(v.Field(i))
			}
		}
	case reflect.Pointer:
		v.Set(reflect.New(v.Type().Elem()))
		fill(v.Elem())
	case reflect.Slice:
		v.Set(reflect.MakeSlice(v.Type(), 1, 1))
		fill(v.Index(0))
	case reflect.String:
		v.SetString("a<b>&\"c\" ΔH")
	case reflect.Float64:
		v.SetFloat(-62.1228)
	case reflect.Int:
		v.SetInt(3)
	case reflect.Bool:
		v.SetBool(true)
	}
}

// jsonNames lists the JSON member names of a struct type.
func jsonNames(t reflect.Type) []string {
	var out []string
	for i := 0; i < t.NumField(); i++ {
		name, _, _ := strings.Cut(t.Field(i).Tag.Get("json"), ",")
		if name != "-" && name != "" {
			out = append(out, name)
		}
	}
	return out
}

// TestJSONStringsAndNumbers: strings and numbers come out as encoding/json writes them, for
// the awkward cases (control characters, HTML characters, invalid UTF-8, the two JavaScript
// line separators, exponents, negative zero); NaN is refused as encoding/json refuses it.
func TestJSONStringsAndNumbers(t *testing.T) {
	for _, s := range []string{"", "plain", "ΔH_p ≈ -62 kJ/mol (200–500 K) → ok", "a\"b\\c", "tab\tnew\nline\rcr\bbs\fff",
		"\x00\x01\x1f\x7f", "<b>&amp;</b>", "bad \xff\xfe utf-8 \xe2\x82", "line\u2028para\u2029end", "\u00e9\U0001F600"} {
		want, _ := json.Marshal(s)
		if got := AppendJSONString(nil, s); string(got) != string(want) {
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
