package screening_test

import (
	"encoding/json"
	"reflect"
	"sort"
	"strings"
	"testing"

	. "ringsieve/screening"
	"ringsieve/screening/units"
)

// TestAppendJSONMatchesMarshal: Result.AppendJSON writes exactly what encoding/json's Marshal
// writes (design choice: the hand-written encoder is a speed-up, never a format change) for the
// whole committed corpus under default conditions and every tenth structure under other
// catalysts, temperatures, concentrations and bulk, descriptor records, and one force-field
// result; every JSON member of the result types must have been non-empty at least once, so
// that each line of the encoder is compared.
func TestAppendJSONMatchesMarshal(t *testing.T) {
	corpus := loadCorpus(t)
	table := DefaultConditions()
	table.ThermoMethod = units.ThermoTable
	var variants []Conditions
	for _, cat := range units.CatalystClasses {
		c := table
		c.Catalyst = cat
		variants = append(variants, c)
	}
	hot, cold, dilute, bulk := table, table, table, table
	hot.Temp, cold.Temp, dilute.Conc, bulk.Bulk = 423.15, 233.15, 0.01, true
	variants = append(variants, hot, cold, dilute, bulk)

	seen := map[string]bool{}
	check := func(what string, r Result) {
		t.Helper()
		want, err := json.Marshal(r)
		if err != nil {
			t.Fatalf("%s: %v", what, err)
		}
		got, err := r.AppendJSON(nil)
		if err != nil || string(got) != string(want) {
			t.Fatalf("%s: AppendJSON differs from encoding/json (%v)\n got  %s\n want %s", what, err, got, want)
		}
		markNonEmpty(reflect.ValueOf(r), seen)
	}
	for i, s := range corpus {
		if r, err := ScreenSMILES(s, table); err == nil {
			check(s, r)
		}
		if i%10 != 0 {
			continue
		}
		for _, c := range variants {
			if r, err := ScreenSMILES(s, c); err == nil {
				check(s+" (variant)", r)
			}
		}
	}
	for _, s := range []string{"C1=CC2CCC1C2", "C1=CCCCCCC1", "C1=CC=CC1", "O=C1OC(=O)C2C3C=CC(O3)C12", "C1=CC2C=CC1C2.[Na+].[Cl-]",
		"C1CC=CCCC=C1", "c1ccccc1", "CCCC", "CC1(C)CC2C=CC1C2", "C1=CC[C@@H]2CCC[C@H]2CC1"} {
		for _, c := range append([]Conditions{table}, variants...) {
			if r, err := ScreenSMILES(s, c); err == nil {
				check(s, r)
			}
		}
	}
	dh, ds, strain := -62.0, -70.0, 80.0
	for _, d := range []Descriptors{
		{RingSize: 5, RingSystem: "bridged", OlefinSubstitution: 2, DHkJmol: &dh, DSJmolK: &ds},
		{RingSize: 8, OlefinSubstitution: 2, StrainkJmol: &strain, Conjugated: true, ConjugatedWith: []string{"carbonyl"}, FunctionalGroups: []string{"ester"}},
		{RingSize: 0},
	} {
		if r, err := ScreenDescriptors(d, table); err == nil {
			check("descriptor record", r)
		}
	}
	ff := DefaultConditions()
	ff.ThermoMethod = units.ThermoForceField
	if r, err := ScreenSMILES("COC(=O)C1CC2C=CC1C2", ff); err == nil {
		check("force field", r)
	}
	var missing []string
	for _, name := range allJSONMembers(reflect.TypeOf(Result{})) {
		if !seen[name] {
			missing = append(missing, name)
		}
	}
	sort.Strings(missing)
	if len(missing) > 0 {
		t.Errorf("never non-empty in the checked results, so not compared: %s", strings.Join(missing, ", "))
	}
}

// markNonEmpty records the JSON members (as Type.member) that hold a non-empty value in v.
func markNonEmpty(v reflect.Value, seen map[string]bool) {
	switch v.Kind() {
	case reflect.Pointer:
		if !v.IsNil() {
			markNonEmpty(v.Elem(), seen)
		}
		return
	case reflect.Slice:
		for i := 0; i < v.Len(); i++ {
			markNonEmpty(v.Index(i), seen)
		}
		return
	case reflect.Struct:
	default:
		return
	}
	t := v.Type()
	for i := 0; i < t.NumField(); i++ {
		name, _, _ := strings.Cut(t.Field(i).Tag.Get("json"), ",")
		if name == "-" || name == "" {
			continue
		}
		f := v.Field(i)
		if !f.IsZero() && !(f.Kind() == reflect.Slice && f.Len() == 0) {
			seen[t.Name()+"."+name] = true
		}
		markNonEmpty(f, seen)
	}
}

// allJSONMembers lists Type.member for every JSON member reachable from t.
func allJSONMembers(t reflect.Type) []string {
	var out []string
	done := map[reflect.Type]bool{}
	var walk func(t reflect.Type)
	walk = func(t reflect.Type) {
		for t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice {
			t = t.Elem()
		}
		if t.Kind() != reflect.Struct || done[t] {
			return
		}
		done[t] = true
		for i := 0; i < t.NumField(); i++ {
			name, _, _ := strings.Cut(t.Field(i).Tag.Get("json"), ",")
			if name == "-" || name == "" {
				continue
			}
			out = append(out, t.Name()+"."+name)
			walk(t.Field(i).Type)
		}
	}
	walk(t)
	return out
}
