package sens

import (
	"fmt"
	"math"
	"math/big"
	"strings"
	"testing"
)

// pairwise is the summation of longSum written in Go: the reference of
// TestLongSumPairwise.
func pairwise(xs []float64) float64 {
	if len(xs) == 1 {
		return xs[0]
	}
	m := len(xs) / 2
	return pairwise(xs[:m]) + pairwise(xs[m:])
}

// TestLongSumPairwise checks that a long sum is added pairwise: to the last
// bit as pairwise summation written in Go, within Higham's bound for it,
// |error| <= ceil(log2 n) u Σ|x_i| (Higham 2002, §4.2, with u = 2^-53),
// while a short sum keeps the order written.
func TestLongSumPairwise(t *testing.T) {
	const n = 1000
	var src strings.Builder
	xs := make([]float64, n)
	terms := make([]string, n)
	for i := range xs {
		xs[i] = 0.1 * float64(1+i%7)
		fmt.Fprintf(&src, "input x%d = %g\n", i, xs[i])
		terms[i] = fmt.Sprintf("x%d", i)
	}
	fmt.Fprintf(&src, "total = %s\nshort = x0 + x1 + x2 + x3\n", strings.Join(terms, " + "))
	p := compileSrc(t, src.String())
	v, err := p.Value("total")
	if err != nil {
		t.Fatal(err)
	}
	if want := pairwise(xs); v.Value != want {
		t.Errorf("total = %v, pairwise in Go %v", v.Value, want)
	}
	// The exact sum of the inputs (as doubles), in 256-bit arithmetic.
	exact := new(big.Float).SetPrec(256)
	var abs float64
	for _, x := range xs {
		exact.Add(exact, new(big.Float).SetPrec(256).SetFloat64(x))
		abs += math.Abs(x)
	}
	e, _ := exact.Float64()
	if bound := math.Ceil(math.Log2(n)) * 0x1p-53 * abs; math.Abs(v.Value-e) > bound {
		t.Errorf("total %v is %g from the exact sum %v, beyond the pairwise bound %g", v.Value, math.Abs(v.Value-e), e, bound)
	}
	s, err := p.Value("short")
	if err != nil {
		t.Fatal(err)
	}
	if want := ((xs[0] + xs[1]) + xs[2]) + xs[3]; s.Value != want {
		t.Errorf("short = %v, want the order written %v", s.Value, want)
	}
}

// A long sum reports a unit mismatch and a domain error as a chain does:
// at the + or the operation, with the same message.
func TestLongSumErrors(t *testing.T) {
	terms := make([]string, 20)
	for i := range terms {
		terms[i] = fmt.Sprintf("%d [kg]", i+1)
	}
	terms[17] = "3 [h]"
	src := "input m = 2 [kg]\ny = m + " + strings.Join(terms, " + ") + " [kg]\n"
	m, err := LoadModel("t", []byte(src))
	if err == nil {
		_, err = m.Compile()
	}
	if err == nil || !strings.Contains(err.Error(), "cannot add m + 1 [kg]") || !strings.Contains(err.Error(), "and 3 [h]: units kg and h do not match") {
		t.Errorf("unit mismatch: %v", err)
	}
	terms[17] = "ln(m - 3 [kg])"
	src = "input m = 2 [kg]\ny = m + " + strings.Join(terms, " + ") + " [kg]\n"
	src = strings.ReplaceAll(src, "ln(m - 3 [kg])", "ln((m - 3 [kg]) / 1 [kg]) * 1 [kg]")
	p := compileSrc(t, src)
	err = p.Check()
	line := strings.Split(src, "\n")[1]
	at := fmt.Sprintf("test:2:%d: ln of a negative number", strings.Index(line, "ln(")+1)
	if err == nil || !strings.HasPrefix(err.Error(), at) {
		t.Errorf("domain error %v, want it at %s", err, at)
	}
}
