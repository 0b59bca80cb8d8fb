package plotting

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/plot"
)

func TestNiceTicks(t *testing.T) {
	// Round steps after Heckbert (1990): the nearest of 1, 2, 2.5, 5, 10
	// times a power of ten.
	for _, tc := range []struct{ x, want float64 }{
		{0.13, 0.1}, {145000, 100000}, {0.3, 0.25}, {3.6, 5}, {7.6, 10}, {1.8, 2}, {1, 1},
	} {
		if got := niceStep(tc.x); math.Abs(got-tc.want) > 1e-12*tc.want {
			t.Errorf("niceStep(%v) = %v, want %v", tc.x, got, tc.want)
		}
	}
	ticks := niceTicks{N: 5}.Ticks(0.05, 0.95)
	var labels []string
	for _, tk := range ticks {
		labels = append(labels, tk.Label)
		if tk.Value < 0.05 || tk.Value > 0.95 {
			t.Errorf("tick %v outside the axis", tk.Value)
		}
	}
	if got := fmt.Sprint(labels); got != "[0.2 0.4 0.6 0.8]" {
		t.Errorf("ticks over [0.05, 0.95] = %s, want [0.2 0.4 0.6 0.8]", got)
	}
	ticks = niceTicks{N: 6}.Ticks(-0.3, 0.7)
	for _, tk := range ticks {
		if tk.Label == "-0" || tk.Label == "0.30000000000000004" {
			t.Errorf("bad tick label %q", tk.Label)
		}
	}
	pt := pctTicks()
	pt.N = 7
	if got := pt.Ticks(-30, 30); len(got) != 7 || got[0].Label != "-30%" || got[3].Label != "0%" || got[6].Label != "+30%" {
		t.Errorf("percentage ticks = %v", got)
	}
	var _ plot.Ticker = unlabeledTicks{niceTicks{}}
	for _, tk := range (unlabeledTicks{niceTicks{}}).Ticks(0, 10) {
		if tk.Label != "" {
			t.Errorf("unlabeled tick has label %q", tk.Label)
		}
	}
}

func TestCleanAndTruncate(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"  mass ", "mass"},
		{"a\nb\tc", "a b c"},
		{"bell\x07", "bell"},
		{"bad\xffutf8", "bad\uFFFDutf8"},
	} {
		if got := clean(tc.in); got != tc.want {
			t.Errorf("clean(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
	for _, tc := range []struct {
		in   string
		n    int
		want string
	}{
		{"steel", 10, "steel"},
		{"steel price", 6, "steel…"},
		{"ab", 1, "…"},
		{"ab", 0, ""},
		{"héllo wörld", 7, "héllo…"},
	} {
		if got := truncate(tc.in, tc.n); got != tc.want {
			t.Errorf("truncate(%q, %d) = %q, want %q", tc.in, tc.n, got, tc.want)
		}
	}
}
