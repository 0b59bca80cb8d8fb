package plotting

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/plot"
)

func TestFormatValue(t *testing.T) {
	// Expected strings follow the rule in FormatValue's doc comment.
	for _, tc := range []struct {
		v    float64
		unit string
		want string
	}{
		{0, "", "0"},
		{math.Copysign(0, -1), "$", "$0"},
		{1, "", "1"},
		{12.3456, "", "12.35"},
		{0.012345, "", "0.01235"},
		{2.5, "kg", "2.5 kg"},
		{2.50, "", "2.5"},
		{999.96, "", "1,000"},
		{9.9996, "", "10"},
		{100, "", "100"},
		{1234.5, "", "1,234"}, // an exact half rounds to even (strconv)
		{1235.5, "", "1,236"},
		{1234567.8, "$", "$1,234,568"},
		{-1234567, "$", "-$1,234,567"},
		{-0.5, "€", "-€0.5"},
		{160000, "$", "$160,000"},
		{0.9, "$/kg", "0.9 $/kg"},
		{12.5, "%", "12.5%"},
		{7, "1", "7"},
		{1.5e-5, "", "1.5e-05"},
		{0.0001, "", "0.0001"},
		{0.000123456, "", "0.0001235"},
		{0.00012345, "", "0.0001234"}, // the binary value lies just below the half
		{2.3456e15, "$", "$2.346e+15"},
		{999999999999999, "", "999,999,999,999,999"},
		{-42.126, "h", "-42.13 h"},
		{-42.125, "h", "-42.12 h"}, // an exact half rounds to even
		{math.NaN(), "$", "NaN"},
		{math.Inf(1), "$", "+Inf"},
		{math.Inf(-1), "kg", "-Inf"},
		{3, " kg ", "3 kg"},
	} {
		got := FormatValue(tc.v, tc.unit)
		if got != tc.want {
			t.Errorf("FormatValue(%v, %q) = %q, want %q", tc.v, tc.unit, got, tc.want)
		}
	}
}

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

func ExampleFormatValue() {
	fmt.Println(FormatValue(1234567.8, "$"))
	fmt.Println(FormatValue(-250, "$"))
	fmt.Println(FormatValue(0.0123456, "$/kg"))
	fmt.Println(FormatValue(12.5, "%"))
	fmt.Println(FormatValue(1.5e-6, "m"))
	// Output:
	// $1,234,568
	// -$250
	// 0.01235 $/kg
	// 12.5%
	// 1.5e-06 m
}
