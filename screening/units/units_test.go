package units

import (
	"errors"
	"math"
	"testing"
)

func TestConditionConstructors(t *testing.T) {
	for _, v := range []float64{0, -1, math.NaN(), math.Inf(1), 2000} {
		if _, err := NewTempK(v); !errors.Is(err, ErrInvalid) {
			t.Errorf("NewTempK(%v) accepted", v)
		}
	}
	for _, v := range []float64{0, -0.5, math.NaN(), math.Inf(-1), 31} {
		if _, err := NewConcMolL(v); !errors.Is(err, ErrInvalid) {
			t.Errorf("NewConcMolL(%v) accepted", v)
		}
	}
	if _, err := TempFromCelsius(-273.15); err == nil {
		t.Error("0 K accepted")
	}
	if tk, err := TempFromCelsius(25); err != nil || math.Abs(float64(tk)-298.15) > 1e-12 {
		t.Errorf("25 °C = %v K (%v)", tk, err)
	}
	if _, err := ParseCatalystClass("platinum-oxo"); err == nil {
		t.Error("unknown catalyst accepted")
	}
}
