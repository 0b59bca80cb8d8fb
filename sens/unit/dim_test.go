package unit

import (
	"math/rand/v2"
	"strconv"
	"testing"
	"unsafe"
)

// refDim is the dimension as it was kept before Dim was packed: an int
// exponent for each base dimension and the currencies in canonical form. Its
// arithmetic is the rule that exponents add in a product and subtract in a
// quotient (SI Brochure, 9th ed. (2019), 2.3.3, from memory: the dimension of
// a derived quantity is a product of powers of the base dimensions); the
// tests check Dim against it.
type refDim struct {
	si  [numBase]int
	cur string
}

func (d refDim) combine(e refDim, sign int) refDim {
	var r refDim
	for i := range r.si {
		r.si[i] = d.si[i] + sign*e.si[i]
	}
	cs := currencies(d.cur)
	for code, n := range currencies(e.cur) {
		cs[code] += sign * n
	}
	r.cur = encodeCurrencies(cs)
	return r
}

// check fails t unless d holds exactly the exponents of ref, in the one form
// that makes == a test of equality.
func (ref refDim) check(t *testing.T, what string, d Dim) {
	t.Helper()
	if d.si() != ref.si || d.cur() != ref.cur {
		t.Fatalf("%s: exponents %v %q, want %v %q", what, d.si(), d.cur(), ref.si, ref.cur)
	}
	if d != makeDim(ref.si, ref.cur) {
		t.Fatalf("%s: %#v is not in the one form of its dimension", what, d)
	}
	narrow := true
	for _, n := range ref.si {
		narrow = narrow && n >= -128 && n <= 127
	}
	if x := d.ext(); x.wide == narrow || (narrow && x.si != [numBase]int{}) || (!narrow && d.e != [numBase]int8{}) {
		t.Fatalf("%s: %v held wide=%v", what, ref.si, x.wide)
	}
}

func TestDimSize(t *testing.T) {
	if n := unsafe.Sizeof(Dim{}); n > 16 {
		t.Errorf("Dim takes %d bytes, want at most 16", n)
	}
}

// TestDimArithmetic runs random products, quotients and powers of base units
// and currencies, through exponents beyond the int8 range and back, against
// refDim.
func TestDimArithmetic(t *testing.T) {
	gens := []Dim{dimLength, dimMass, dimTime, dimCurrent, dimTemperature, dimAmount, dimLuminosity,
		currencyDim("$"), currencyDim("EUR"), currencyDim("GBP"), dimEnergy, MustParse("$/h").Dim}
	refs := make([]refDim, len(gens))
	for i, g := range gens {
		refs[i] = refDim{g.si(), g.cur()}
	}
	rng := rand.New(rand.NewPCG(13, 1))
	for run := 0; run < 200; run++ {
		var d Dim
		var ref refDim
		var seen []Dim
		var seenRef []refDim
		for step := 0; step < 300; step++ {
			k := rng.IntN(len(gens))
			g, gr := gens[k], refs[k]
			if rng.IntN(4) == 0 {
				// A power of up to 49 moves exponents by large steps, past the
				// int8 range within a few products.
				p := 1 + rng.IntN(49) // exponents of energy reach 98: within the limit of ±99
				var err error
				if g, err = g.Pow(p, 1); err != nil {
					t.Fatal(err)
				}
				for i := range gr.si {
					gr.si[i] *= p
				}
				cs := currencies(gr.cur)
				for c := range cs {
					cs[c] *= p
				}
				gr.cur = encodeCurrencies(cs)
			}
			sign := 1
			if rng.IntN(2) == 0 {
				sign = -1
				d = d.Div(g)
			} else {
				d = d.Mul(g)
			}
			ref = ref.combine(gr, sign)
			ref.check(t, "run "+strconv.Itoa(run)+" step "+strconv.Itoa(step), d)
			seen, seenRef = append(seen, d), append(seenRef, ref)
		}
		// == agrees with the exponents, wide or not.
		for i := range seen {
			j := rng.IntN(len(seen))
			if (seen[i] == seen[j]) != (seenRef[i] == seenRef[j]) {
				t.Fatalf("run %d: %v == %v is %v", run, seenRef[i], seenRef[j], seen[i] == seen[j])
			}
		}
		// Dividing by itself leaves no dimension, however wide it went.
		if z := d.Div(d); z != (Dim{}) || !z.IsDimensionless() {
			t.Fatalf("run %d: d/d = %#v", run, z)
		}
	}
}

// TestDimWide checks text, names and powers of dimensions whose exponents
// leave the int8 range, which only products reach (Parse limits exponents to
// ±99).
func TestDimWide(t *testing.T) {
	m99, err := dimLength.Pow(99, 1)
	if err != nil {
		t.Fatal(err)
	}
	m198 := m99.Mul(m99)
	usd := currencyDim("$")
	for _, c := range []struct {
		d          Dim
		str, name  string
		wantNarrow bool
	}{
		{m198, "m^198", "length^198", false},
		{Dim{}.Div(m198), "1/m^198", "1 per length^198", false},
		{m198.Mul(usd), "$*m^198", "currency $ × length^198", false},
		{m198.Mul(usd).Div(m99), "$*m^99", "currency $ × length^99", true},
		{m198.Div(m99), "m^99", "length^99", true},
		{m198.Mul(dimTime).Div(m198), "s", "time", true},
	} {
		if got, name := c.d.String(), c.d.Name(); got != c.str || name != c.name {
			t.Errorf("%s: String %q Name %q, want %q", c.str, got, name, c.name)
		}
		if narrow := !c.d.ext().wide; narrow != c.wantNarrow {
			t.Errorf("%s: held narrow=%v", c.str, narrow)
		}
	}
	if m198.Div(m99) != m99 || m198.Mul(dimTime).Div(m198) != dimTime {
		t.Error("a dimension back in the int8 range differs from the same dimension built there")
	}
	if h, err := m198.Pow(1, 2); err != nil || h != m99 {
		t.Errorf("sqrt(m^198) = %v, %v; want m^99", h, err)
	}
	if _, err := m198.Pow(2, 1); err == nil || err.Error() != "cannot raise m^198 to the power 2: the exponent of m would be 396 (limit ±99)" {
		t.Errorf("(m^198)^2: %v", err)
	}
	if _, ok := m198.Mul(usd).Currency(); ok {
		t.Error("$*m^198 is not an amount of money")
	}
	if code, ok := m198.Mul(usd).Div(m198).Currency(); !ok || code != "$" {
		t.Errorf("$*m^198/m^198: currency %q %v", code, ok)
	}
}
