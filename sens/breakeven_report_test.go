package sens

import (
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestBreakevenDomain: cost = price · 2 kg + 10 $ reaches 5 $ only at
// price = (5 - 10) / 2 = -2.5 $/kg (by hand), a negative price for one that
// is positive at its baseline: outside the input's domain, not only outside
// its range. Reaching 14 $ at 2 $/kg needs no change of sign.
func TestBreakevenDomain(t *testing.T) {
	p := compileSrc(t, "input price = 3 [$/kg] (2..4)\ninput mass = 2 [kg]\ncost = price * mass + (10 [$])\n")
	pr, err := p.Problem("cost")
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		target, at float64
		outside    bool
	}{{5, -2.5, true}, {14, 2, false}} {
		res, err := Breakeven(pr, &BreakevenSettings{Input: "price", Target: tc.target})
		if err != nil {
			t.Fatal(err)
		}
		if len(res.Crossings) != 1 || !scalar.EqualWithinAbsOrRel(res.Crossings[0].Value, tc.at, 1e-9, 1e-9) || res.Crossings[0].OutsideDomain != tc.outside {
			t.Errorf("target %v: crossings %+v", tc.target, res.Crossings)
		}
		if !strings.Contains(res.Method, "Newton's method") || !strings.Contains(res.Method, "whole domain") {
			t.Errorf("method %q", res.Method)
		}
	}
	res, err := Breakeven(pr, &BreakevenSettings{Input: "price", Target: 14, Bounded: true, Low: 1, High: 3})
	if err != nil || !strings.Contains(res.Method, "a scan of 201 points from 1 to 3") {
		t.Errorf("bounded method %q (%v)", res.Method, err)
	}
}
