package sens

import (
	"fmt"
	"reflect"
	"testing"
)

// unsampled returns a copy of r without what depends on which inputs were
// sampled inside their ranges: whole evaluations cannot prove an input
// monotone, so they sample every one; the cones sample only the others.
// The values found must be the same.
func unsampled(r *TornadoResult) *TornadoResult {
	if r == nil {
		return nil
	}
	c := *r
	c.Bars = append([]TornadoBar(nil), r.Bars...)
	for i := range c.Bars {
		c.Bars[i].Sampled = false
	}
	c.Evaluations = 0
	return &c
}

// firstDiff describes the first bar or field where two tornado results
// differ.
func firstDiff(a, b *TornadoResult) string {
	if a == nil || b == nil {
		return fmt.Sprintf("%v, %v", a, b)
	}
	if len(a.Bars) != len(b.Bars) {
		return fmt.Sprintf("%d and %d bars", len(a.Bars), len(b.Bars))
	}
	a, b = unsampled(a), unsampled(b)
	for i := range a.Bars {
		if !reflect.DeepEqual(a.Bars[i], b.Bars[i]) {
			return fmt.Sprintf("bar %d: %+v and %+v", i, a.Bars[i], b.Bars[i])
		}
	}
	x, y := *a, *b
	x.Bars, y.Bars = nil, nil
	return fmt.Sprintf("%+v and %+v", x, y)
}

// The one-at-a-time analyses (tornado, spider, sweeps of one and two
// inputs, break-even) of a line-item model (maps with scalars
// broadcast, sums, filters, group subtotals, mean, min, max, a dot product,
// and a sum of squares that is not monotone, so that a tornado samples
// inside the ranges and refines the extremes it finds) give the same
// results through the cones of the loop nodes as through whole
// evaluations, to the last bit.
func TestOneAtATimeThroughVectorCones(t *testing.T) {
	p, _ := loadBid(t, 150, lineItemModel+"bump = sum((hours - bid.hours) * (hours - bid.hours))\n")
	for _, f := range p.Formulas {
		pr, err := p.Problem(f.Name)
		if err != nil {
			t.Fatal(err)
		}
		if _, ok := pr.F.(coner); !ok {
			t.Fatalf("%s: the compiled formula has no cones", f.Name)
		}
		if _, ok := pr.F.(coner); ok {
			if cs, err := pr.F.(coner).cones(pr.Baseline()); err != nil || cs == nil {
				t.Fatalf("%s: no cones at the baseline: %v", f.Name, err)
			}
		}
		plain := *pr
		plain.F = rowsOnly{pr.F} // no cones: every point a whole evaluation
		t1, err1 := Tornado(pr, nil)
		t2, err2 := Tornado(&plain, nil)
		if (err1 == nil) != (err2 == nil) || !reflect.DeepEqual(unsampled(t1), unsampled(t2)) {
			t.Errorf("%s: tornado through cones (%v) and whole evaluations (%v) differ: %s", f.Name, err1, err2, firstDiff(t1, t2))
		}
		s1, err1 := Spider(pr, nil)
		s2, err2 := Spider(&plain, nil)
		if (err1 == nil) != (err2 == nil) || !reflect.DeepEqual(s1, s2) {
			t.Errorf("%s: spider through cones (%v) and whole evaluations (%v) differ", f.Name, err1, err2)
		}
		// A sweep of a line's hours, one of it against the labour rate, and
		// a break-even in the line's hours.
		if f.Name == "total" || f.Name == "bump" {
			var hours []string
			for _, in := range pr.Inputs {
				if len(in.Name) > 6 && in.Name[:6] == "hours[" {
					hours = append(hours, in.Name)
				}
			}
			el, other := hours[0], "rate"
			if f.Name == "bump" {
				other = hours[1]
			}
			w1, err1 := Sweep1D(pr, &Sweep1DSettings{Axis: Axis{Input: el, N: 21}})
			w2, err2 := Sweep1D(&plain, &Sweep1DSettings{Axis: Axis{Input: el, N: 21}})
			if err1 != nil || err2 != nil || !reflect.DeepEqual(w1, w2) {
				t.Errorf("%s: sweep of %s through cones (%v) and whole evaluations (%v) differ", f.Name, el, err1, err2)
			}
			v1, err1 := Sweep2D(pr, &Sweep2DSettings{X: Axis{Input: el, N: 7}, Y: Axis{Input: other, N: 5}})
			v2, err2 := Sweep2D(&plain, &Sweep2DSettings{X: Axis{Input: el, N: 7}, Y: Axis{Input: other, N: 5}})
			if err1 != nil || err2 != nil || !reflect.DeepEqual(v1, v2) {
				t.Errorf("%s: sweep of %s and %s through cones (%v) and whole evaluations (%v) differ", f.Name, el, other, err1, err2)
			}
			target := t1.Baseline * 1.001
			b1, err1 := Breakeven(pr, &BreakevenSettings{Input: el, Target: target})
			b2, err2 := Breakeven(&plain, &BreakevenSettings{Input: el, Target: target})
			if err1 != nil || err2 != nil || len(b1.Crossings) == 0 || !reflect.DeepEqual(b1, b2) {
				t.Errorf("%s: break-even in %s through cones (%v) and whole evaluations (%v) differ", f.Name, el, err1, err2)
			}
		}
		if f.Name == "bump" {
			sampled := 0
			for _, b := range t1.Bars {
				if b.Sampled {
					sampled++
				}
			}
			if sampled == 0 {
				t.Errorf("bump: no input sampled inside its range")
			}
		}
	}
}
