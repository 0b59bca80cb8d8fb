package unit

import (
	"fmt"
	"strings"
)

// Describe says what the unit written s is, for a person reading a model:
// what each symbol in it stands for, its dimension, and its size in the
// simplest unit of that dimension (coherent SI units, or the currency):
//
//	kWh: kilowatt hour; energy; 1 kWh = 3,600,000 J
//	$/h: $ = currency $, h = hour; currency $ per time; 1 $/h = 0.0002778 $/s
//
// It returns Parse's error for text that is not a unit.
func Describe(s string) (string, error) {
	u, err := Parse(s)
	if err != nil {
		return "", err
	}
	desc := u.String()
	if m, ok := meaning(strings.TrimSpace(s)); ok {
		desc += ": " + m
	} else if ts, ok := u.terms(); ok {
		var names []string
		for _, t := range ts {
			if m, ok := meaning(t.sym); ok {
				names = append(names, t.sym+" = "+m)
			}
		}
		if len(names) > 0 {
			desc += ": " + strings.Join(names, ", ")
		}
	}
	if name := u.Dim.Name(); name != u.Dim.String() {
		desc += "; " + name
	} else {
		desc += "; dimension " + name
	}
	if base := Simplest(u.Dim); base.String() != u.String() {
		desc += fmt.Sprintf("; 1 %s = %s", u, Format(u.Factor/base.Factor, base.String()))
	}
	return desc, nil
}

// meaning is what the symbol sym stands for.
func meaning(sym string) (string, bool) {
	if sym == "1" {
		return "a pure number", true
	}
	e, ok := lookup(sym)
	if !ok {
		return "", false
	}
	if code, factor, ok := currencySymbol(sym); ok {
		switch factor {
		case 1:
			what := "currency " + code
			if code != sym {
				what = "currency " + code + ", written " + sym
			}
			return what + " (a dimension of its own unless the model states an exchange rate)", true
		case 1e3:
			return "thousand " + code, true
		}
		return "million " + code, true
	}
	return e.meaning, true
}
