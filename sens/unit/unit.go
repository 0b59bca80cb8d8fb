package unit

import (
	"fmt"
	"math"
	"strings"
)

// Unit is a scale factor to coherent base units and a dimension:
//
//	value_in_base = value_in_unit * Factor
//
// A Unit from Parse, One, Currency, Simplest, Mul, Div or Pow also remembers the symbols it was
// written with, so String shows "$/h" rather than "$/s". Units compare with ==: two units are
// equal when they have the same factor, dimension and text. The zero Unit is not valid (its
// factor is 0); use One for "no unit".
type Unit struct {
	Factor float64
	Dim    Dim
	text   string // canonical text (see format); "" for a Unit built by hand
	rates  *Rates // the exchange rates the unit is expressed under (see In), or nil
}

// One is the dimensionless unit with factor 1, written "1".
func One() Unit { return Unit{Factor: 1, text: "1"} }

// Currency is one unit of a currency: "$" (the model's default currency) or an ISO 4217 code
// such as "EUR". Each currency is a base dimension of its own; nothing here converts one
// currency into another (see Unit.Exchange). Currency panics on any other code; use Parse for
// text that comes from a user.
func Currency(code string) Unit {
	if !isCurrency(code) {
		panic(fmt.Sprintf("unit.Currency: %q is not \"$\" or an ISO 4217 code", code))
	}
	return Unit{Factor: 1, Dim: currencyDim(code), text: code}
}

// MustParse is Parse for text known to be valid, such as a constant in a program; it panics
// on error.
func MustParse(s string) Unit {
	u, err := Parse(s)
	if err != nil {
		panic(fmt.Sprintf("unit.MustParse(%q): %v", s, err))
	}
	return u
}

// Mul is the unit of a product: factors multiply, exponents add, and like symbols merge
// ("kg" times "kg" is "kg^2"; "h" times "$/h" is "$"). Mul does not check ranges: a factor may
// overflow to +Inf, and an exponent beyond ±99 makes String unreadable by Parse.
func (u Unit) Mul(v Unit) Unit { return u.combine(v, 1) }

// Div is the unit of a quotient u/v.
func (u Unit) Div(v Unit) Unit { return u.combine(v, -1) }

func (u Unit) combine(v Unit, sign int) Unit {
	r := Unit{Factor: u.Factor * v.Factor, Dim: u.Dim.combine(v.Dim, sign)}
	if sign < 0 {
		r.Factor = u.Factor / v.Factor
	}
	tu, ok1 := u.terms()
	tv, ok2 := v.terms()
	if !ok1 || !ok2 {
		return r
	}
	w, err := fromTerms(mulTerms(tu, tv, sign))
	if err != nil {
		return r // out of range: keep factor and dimension, drop the text
	}
	rates := u.rates
	if rates == nil {
		rates = v.rates
	}
	return w.In(rates)
}

// Pow raises u to the rational power num/den: Pow(1, 2) is a square root, Pow(-1, 1) a
// reciprocal. Exponents stay integers: the power must leave every exponent whole, both of the
// dimension (the square root of m is an error) and of each symbol as written (the square root
// of km^2 is km; that of ha is an error, since no symbol squares to ha: write m^2, or show the
// result in Simplest of its dimension). Half-integer exponents are not supported: they arise in
// noise densities, not in cost models.
func (u Unit) Pow(num, den int) (Unit, error) {
	d, err := u.Dim.pow(num, den)
	if err != nil {
		return Unit{}, fmt.Errorf("cannot raise %s to the power %s: %v", u, powText(num, den), err)
	}
	num, den, _ = reduce(num, den)
	ts, ok := u.terms()
	if !ok {
		f := math.Pow(u.Factor, float64(num)/float64(den))
		if !validFactor(f) {
			return Unit{}, fmt.Errorf("cannot raise %s to the power %s: scale factor out of range", u, powText(num, den))
		}
		return Unit{Factor: f, Dim: d}, nil
	}
	out := make([]term, len(ts))
	for i, t := range ts {
		if t.exp*num%den != 0 {
			return Unit{}, fmt.Errorf("cannot raise %s to the power %s: the exponent of %s would be %s (write the unit as %s first)",
				u, powText(num, den), t.sym, fraction(t.exp*num, den), Simplest(u.Dim))
		}
		out[i] = term{t.sym, t.exp * num / den}
	}
	w, err := fromTerms(out)
	if err != nil {
		return Unit{}, fmt.Errorf("cannot raise %s to the power %s: %v", u, powText(num, den), err)
	}
	return w.In(u.rates), nil
}

// String is the unit's canonical text, which Parse reads back to the same Unit: numerator
// symbols joined by "*", then "/" and the denominator (in parentheses when it has more than one
// symbol), exponents as "^n": "$/h", "kg*m/s^2", "$/(kg*h)", "m^2", "1/s", "1". Symbols keep
// the spelling they were parsed with; "m2" becomes "m^2". A Unit built by hand, without text,
// prints its dimension in base units, followed by its factor when that is not 1 (that form is
// for messages and does not parse).
func (u Unit) String() string {
	if u.text != "" {
		return u.text
	}
	if u.Factor == 1 {
		return u.Dim.String()
	}
	return fmt.Sprintf("%s (×%g)", u.Dim, u.Factor)
}

// Compatible reports whether u and v have the same dimension, so that Convert works.
func (u Unit) Compatible(v Unit) bool { return u.Dim == v.Dim }

// Convert re-expresses x, a value in unit from, in unit to:
//
//	x * from.Factor / to.Factor
//
// It fails when the dimensions differ; the error names both units and their dimensions.
func Convert(x float64, from, to Unit) (float64, error) {
	if !from.Compatible(to) {
		return 0, incompatible(from, to)
	}
	if from.Factor == to.Factor {
		return x, nil
	}
	return x * from.Factor / to.Factor, nil
}

func incompatible(from, to Unit) error {
	a, ok1 := from.Dim.singleCurrency()
	b, ok2 := to.Dim.singleCurrency()
	if ok1 && ok2 {
		return fmt.Errorf("cannot convert %s to %s: different currencies, and no exchange rate is stated (state one, e.g. exchange %s = 1.1 [%s])",
			from, to, a, b)
	}
	return fmt.Errorf("cannot convert %s to %s: %s vs %s", from, to, from.Dim.Name(), to.Dim.Name())
}

// Simplest is the unit in which a value of dimension d is shown when nothing else is asked
// for. It is always coherent (Factor 1), so a value held in base units is shown unchanged:
//
//   - dimensionless: "1";
//   - currencies first ("$" before three-letter codes, codes alphabetical), then the physical
//     part;
//   - the physical part is N, Pa, J or W when it is exactly one of them or its reciprocal
//     ("J", "$/J", "W"), else SI base units in the order kg, m, s, A, K, mol, cd
//     ("kg*m/s", "m^2", "1/s");
//   - positive exponents in the numerator, negative ones after "/": "$/kg", "$/(kg*s)".
func Simplest(d Dim) Unit {
	u, err := fromTerms(d.terms(true))
	if err != nil {
		return Unit{Factor: 1, Dim: d}
	}
	return u
}

// term is one symbol with its exponent, such as {"s", -2}.
type term struct {
	sym string
	exp int
}

// terms recovers u's symbols from its canonical text.
func (u Unit) terms() ([]term, bool) {
	if u.text == "" {
		return nil, false
	}
	ts, err := parseTerms(u.text)
	if err != nil {
		return nil, false
	}
	return ts, true
}

// mulTerms multiplies (sign 1) or divides (sign -1) two symbol lists, merging like symbols in
// order of first appearance.
func mulTerms(a, b []term, sign int) []term {
	out := append([]term(nil), a...)
next:
	for _, t := range b {
		for i := range out {
			if out[i].sym == t.sym {
				out[i].exp += sign * t.exp
				continue next
			}
		}
		out = append(out, term{t.sym, sign * t.exp})
	}
	return out
}

// powTerms raises every exponent to the integer power n.
func powTerms(ts []term, n int) []term {
	out := make([]term, len(ts))
	for i, t := range ts {
		out[i] = term{t.sym, t.exp * n}
	}
	return out
}

// canonical drops zero exponents and moves the denominator after the numerator, keeping order
// within each, so that String and Parse agree on one order and hence on one rounded factor.
func canonical(ts []term) []term {
	var num, den []term
	for _, t := range ts {
		switch {
		case t.exp > 0:
			num = append(num, t)
		case t.exp < 0:
			den = append(den, t)
		}
	}
	return append(num, den...)
}

// fromTerms builds the Unit for a symbol list. The factor is the numerator product divided by
// the denominator product, computed in canonical order.
func fromTerms(ts []term) (Unit, error) {
	ts = canonical(ts)
	num, den := 1.0, 1.0
	var d Dim
	for _, t := range ts {
		e, ok := lookup(t.sym)
		if !ok {
			return Unit{}, fmt.Errorf("unknown unit %q", t.sym)
		}
		if t.exp < -maxExp || t.exp > maxExp {
			return Unit{}, fmt.Errorf("exponent of %s out of range: %d (limit ±%d)", t.sym, t.exp, maxExp)
		}
		if t.exp > 0 {
			num *= math.Pow(e.factor, float64(t.exp))
		} else {
			den *= math.Pow(e.factor, float64(-t.exp))
		}
		ed, err := e.dim.Pow(t.exp, 1)
		if err != nil {
			return Unit{}, err
		}
		d = d.Mul(ed)
	}
	f := num / den
	if !validFactor(f) {
		return Unit{}, fmt.Errorf("scale factor of %s out of floating-point range", format(ts))
	}
	return Unit{Factor: f, Dim: d, text: format(ts)}, nil
}

func validFactor(f float64) bool { return f > 0 && !math.IsInf(f, 0) }

// format writes a symbol list as canonical text.
func format(ts []term) string {
	var num, den []string
	for _, t := range ts {
		switch {
		case t.exp > 0:
			num = append(num, t.sym+expText(t.exp))
		case t.exp < 0:
			den = append(den, t.sym+expText(-t.exp))
		}
	}
	s := strings.Join(num, "*")
	if s == "" {
		s = "1"
	}
	switch len(den) {
	case 0:
	case 1:
		s += "/" + den[0]
	default:
		s += "/(" + strings.Join(den, "*") + ")"
	}
	return s
}

func expText(n int) string {
	if n == 1 {
		return ""
	}
	return fmt.Sprintf("^%d", n)
}
