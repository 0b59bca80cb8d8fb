package unit

import (
	"fmt"
	"math"
	"testing"
)

func TestFormat(t *testing.T) {
	// Expected strings follow the rule in Format's doc comment: four
	// significant digits, the whole part kept, commas in threes (common
	// practice in cost reports), "$" before the number and "%" right after it.
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
		{0.9, "$/kg", "0.9 $/kg"},
		{12.5, "%", "12.5%"},
		{7, "1", "7"},
		{1.5e-5, "", "1.5e-05"},
		{0.0001, "", "0.0001"},
		{0.000123456, "", "0.0001235"},
		{0.00012345, "", "0.0001234"}, // the binary value lies just below the half
		{999999999999999, "", "999,999,999,999,999"},
		{-42.126, "h", "-42.13 h"},
		{-42.125, "h", "-42.12 h"}, // an exact half rounds to even
		{math.NaN(), "$", "NaN"},
		{math.Inf(1), "$", "+Inf"},
		{math.Inf(-1), "kg", "-Inf"},
		{3, " kg ", "3 kg"},
		{150.8, "k$", "150.8 k$"}, // k$ is not money at its own scale: the plain rule

		// Money: cents where they matter, none for whole amounts or from
		// $10,000 up (common practice in cost reports).
		{2.5, "$", "$2.50"},
		{109.95, "$", "$109.95"},
		{84.88, "$", "$84.88"},
		{97.4123, "$", "$97.41"},
		{6, "$", "$6"},
		{150800, "$", "$150,800"},
		{1234.567, "$", "$1,234.57"},
		{12345.67, "$", "$12,346"},
		{1234567.8, "$", "$1,234,568"},
		{-1234567, "$", "-$1,234,567"},
		{-0.5, "€", "-€0.50"},
		{0.25, "$", "$0.25"},
		{-0.01857, "$", "-$0.01857"},
		{0.00005, "$", "$5e-05"},
		{160000, "$", "$160,000"},
		{2.3456e15, "$", "$2.346e+15"},
		{150800.25, "EUR", "150,800 EUR"},
		{2.5, "EUR", "2.50 EUR"},
	} {
		if got := Format(tc.v, tc.unit); got != tc.want {
			t.Errorf("Format(%v, %q) = %q, want %q", tc.v, tc.unit, got, tc.want)
		}
	}
}

func TestSigned(t *testing.T) {
	for _, tc := range []struct {
		v    float64
		unit string
		want string
	}{
		{45000, "$", "+$45,000"},
		{-24000, "$", "-$24,000"},
		{0, "$", "$0"},
		{11.4, "$/h", "+11.4 $/h"},
		{30, "%", "+30%"},
		{-26.666666, "%", "-26.67%"},
		{math.Inf(1), "", "+Inf"},
	} {
		if got := Signed(tc.v, tc.unit); got != tc.want {
			t.Errorf("Signed(%v, %q) = %q, want %q", tc.v, tc.unit, got, tc.want)
		}
	}
}

func TestColumn(t *testing.T) {
	// One number of decimals for a whole column of money, from its largest
	// magnitude: a tornado of a unit cost in cents, one of a batch cost in
	// whole dollars, a column of whole amounts without cents.
	for _, tc := range []struct {
		unit   string
		values []float64
		want   string
	}{
		{"$", []float64{84.8812, 109.9547, 25.0735, 0.4751}, "[$84.88 $109.95 $25.07 $0.48]"},
		{"$", []float64{130640, 181040.4, 475.25}, "[$130,640 $181,040 $475]"},
		{"$", []float64{6, 10, 120}, "[$6 $10 $120]"},
		{"$", []float64{6, 2.5}, "[$6.00 $2.50]"},
		{"$", []float64{0.5, 0.25}, "[$0.50 $0.25]"},
		{"$", []float64{0.018571, 0.0021}, "[$0.01857 $0.00210]"},
		{"$", []float64{0, 0}, "[$0 $0]"},
		{"$", []float64{-0.001, 50}, "[$0 $50]"},            // -0.001 is a whole amount at cents
		{"$", []float64{-0.004, 50.5}, "[$0.00 $50.50]"},    // no "-$0.00"
		{"kg", []float64{1.5, 1234.5}, "[1.5 kg 1,234 kg]"}, // not money: value by value
	} {
		c := NewColumn(tc.unit, tc.values...)
		got := make([]string, len(tc.values))
		for i, v := range tc.values {
			got[i] = c.Format(v)
		}
		if s := fmt.Sprint(got); s != tc.want {
			t.Errorf("column %q %v = %s, want %s", tc.unit, tc.values, s, tc.want)
		}
	}
	e := Fixed("", 4)
	if got := fmt.Sprint([]string{e.Signed(0.64921), e.Signed(-0.19058), e.Signed(0), e.Signed(-0.00001)}); got != "[+0.6492 -0.1906 0.0000 0.0000]" {
		t.Errorf("fixed column: %s", got)
	}
}

func ExampleFormat() {
	fmt.Println(Format(97.4123, "$"))
	fmt.Println(Format(150800, "$"))
	fmt.Println(Format(-250, "$"))
	fmt.Println(Format(0.0123456, "$/kg"))
	fmt.Println(Format(12.5, "%"))
	fmt.Println(Format(1.5e-6, "m"))
	// Output:
	// $97.41
	// $150,800
	// -$250
	// 0.01235 $/kg
	// 12.5%
	// 1.5e-06 m
}

func ExampleColumn() {
	// The output of a tornado of a unit cost: one number of decimals for the
	// column, from its largest value.
	out := []float64{84.8812, 109.9547, 95.8, 3.6}
	c := NewColumn("$", out...)
	for _, v := range out {
		fmt.Println(c.Format(v))
	}
	// Output:
	// $84.88
	// $109.95
	// $95.80
	// $3.60
}

// TestAligned: a column of shares takes one number of decimals, four
// significant digits of its largest value (the rule of money columns,
// common practice for tables): 68.55 and 7.881 are written 68.55 and 7.88.
func TestAligned(t *testing.T) {
	for _, tc := range []struct {
		vals []float64
		want []string
	}{
		{[]float64{68.5512, 7.8812, 23.5676}, []string{"+68.55%", "+7.88%", "+23.57%"}},
		{[]float64{150.26, -50.26}, []string{"+150.3%", "-50.3%"}},
		{[]float64{1234.6, 2}, []string{"+1,235%", "+2%"}},
		{[]float64{0.5, 0.01234}, []string{"+0.5000%", "+0.0123%"}},
		{[]float64{0, 0}, []string{"0%", "0%"}},
	} {
		c := Aligned("%", tc.vals...)
		for j, v := range tc.vals {
			if g := c.Signed(v); g != tc.want[j] {
				t.Errorf("Aligned(%v).Signed(%v) = %q, want %q", tc.vals, v, g, tc.want[j])
			}
		}
	}
}
