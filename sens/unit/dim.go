package unit

import (
	"fmt"
	"sort"
	"strconv"
	"strings"
	"unique"
)

// The physical base dimensions, as indices into Dim's exponent array.
const (
	bLength = iota
	bMass
	bTime
	bCurrent
	bTemperature
	bAmount
	bLuminosity
	numBase
)

// baseSymbol is the coherent SI unit of each base dimension.
var baseSymbol = [numBase]string{"m", "kg", "s", "A", "K", "mol", "cd"}

// displayOrder is the order in which base units are written: kg*m^2/s^2, not m^2*kg/s^2.
var displayOrder = [numBase]int{bMass, bLength, bTime, bCurrent, bTemperature, bAmount, bLuminosity}

// Dim is a dimension: an integer exponent for each SI base dimension and for each currency.
// Every currency ("$", "EUR", ...) is a base dimension of its own. Dim is a comparable value, so
// == works and a Dim can key a map; Equal is the same test. The zero Dim is dimensionless.
//
// A Dim is 16 bytes: the base exponents as int8 in place, and one handle for everything else
// (see dimExt), which is zero for a dimension of base units alone. Exponents outside the int8
// range, which only repeated products reach, move the whole dimension into the handle, so every
// exponent an int holds is kept exactly as before. Each dimension has one form (see makeDim),
// which is what makes == a test of equality.
type Dim struct {
	e [numBase]int8         // the base exponents; all zero when x holds them (x.Value().wide)
	x unique.Handle[dimExt] // currencies and wide exponents; the zero handle when there are none
}

// dimExt is the part of a dimension that is not kept in place: the currency exponents in
// canonical form ("$:1,EUR:-1", see encodeCurrencies), and the base exponents when one of them
// is outside the int8 range (wide). Handles to equal dimExt values are equal (package unique),
// and the values are freed once no Dim refers to them.
type dimExt struct {
	si   [numBase]int
	wide bool
	cur  string
}

// makeDim is the one form of the dimension with base exponents si and currencies cur (in
// canonical form).
func makeDim(si [numBase]int, cur string) Dim {
	var d Dim
	for i, n := range si {
		if n != int(int8(n)) {
			return Dim{x: unique.Make(dimExt{si: si, wide: true, cur: cur})}
		}
		d.e[i] = int8(n)
	}
	if cur != "" {
		d.x = unique.Make(dimExt{cur: cur})
	}
	return d
}

// ext returns what the handle holds; the zero dimExt for the zero handle.
func (d Dim) ext() dimExt {
	if d.x == (unique.Handle[dimExt]{}) {
		return dimExt{}
	}
	return d.x.Value()
}

// si returns the exponent of every base dimension.
func (d Dim) si() [numBase]int {
	if x := d.ext(); x.wide {
		return x.si
	}
	var si [numBase]int
	for i, n := range d.e {
		si[i] = int(n)
	}
	return si
}

// cur returns the currency exponents in canonical form, "" when there are none.
func (d Dim) cur() string { return d.ext().cur }

// phys returns the dimension of d's base units alone, without its currencies.
func (d Dim) phys() Dim {
	if d.x == (unique.Handle[dimExt]{}) {
		return d
	}
	return makeDim(d.si(), "")
}

// baseDim is the dimension of base index b to the first power.
func baseDim(b int) Dim {
	var d Dim
	d.e[b] = 1
	return d
}

// currencyDim is the dimension of one unit of the currency code.
func currencyDim(code string) Dim {
	return makeDim([numBase]int{}, code+":1")
}

// Equal reports whether d and e are the same dimension. It is the same as d == e.
func (d Dim) Equal(e Dim) bool { return d == e }

// IsDimensionless reports whether every exponent of d is zero.
func (d Dim) IsDimensionless() bool { return d == Dim{} }

// Mul returns the dimension of a product: exponents add.
func (d Dim) Mul(e Dim) Dim { return d.combine(e, 1) }

// Div returns the dimension of a quotient: exponents subtract.
func (d Dim) Div(e Dim) Dim { return d.combine(e, -1) }

func (d Dim) combine(e Dim, sign int) Dim {
	// The common cases, base exponents in place on both sides and the
	// currencies of at most one side, cost no more than the sums.
	none := unique.Handle[dimExt]{}
	var r Dim
	switch {
	case e.x == none && (d.x == none || !d.x.Value().wide):
		r.x = d.x
	case d.x == none && sign > 0 && !e.x.Value().wide:
		r.x = e.x
	default:
		return d.combineExt(e, sign)
	}
	for i := range r.e {
		n := int(d.e[i]) + sign*int(e.e[i])
		if n != int(int8(n)) {
			return d.combineExt(e, sign)
		}
		r.e[i] = int8(n)
	}
	return r
}

// combineExt is combine for any two dimensions.
func (d Dim) combineExt(e Dim, sign int) Dim {
	a, b := d.si(), e.si()
	var si [numBase]int
	for i := range si {
		si[i] = a[i] + sign*b[i]
	}
	dc, ec := d.cur(), e.cur()
	var cur string
	switch {
	case ec == "":
		cur = dc
	case dc == "" && sign > 0:
		cur = ec
	default:
		cs := currencies(dc)
		for code, n := range currencies(ec) {
			cs[code] += sign * n
		}
		cur = encodeCurrencies(cs)
	}
	return makeDim(si, cur)
}

// Pow returns d raised to the rational power num/den. It fails when den is zero, when a
// resulting exponent is not an integer (the square root of a length), or when one exceeds ±99.
func (d Dim) Pow(num, den int) (Dim, error) {
	r, err := d.pow(num, den)
	if err != nil {
		return Dim{}, fmt.Errorf("cannot raise %s to the power %s: %v", d, powText(num, den), err)
	}
	return r, nil
}

// pow is Pow with a short reason for its error, to which callers add context.
func (d Dim) pow(num, den int) (Dim, error) {
	num, den, err := reduce(num, den)
	if err != nil {
		return Dim{}, err
	}
	var si [numBase]int
	for i, e := range d.si() {
		n, err := scaleExp(e, num, den, baseSymbol[i])
		if err != nil {
			return Dim{}, err
		}
		si[i] = n
	}
	cs := currencies(d.cur())
	for _, code := range sortedCodes(cs) {
		n, err := scaleExp(cs[code], num, den, code)
		if err != nil {
			return Dim{}, err
		}
		cs[code] = n
	}
	return makeDim(si, encodeCurrencies(cs)), nil
}

// reduce checks a rational power and brings it to lowest terms with a positive denominator.
func reduce(num, den int) (int, int, error) {
	if den == 0 {
		return 0, 0, fmt.Errorf("zero denominator")
	}
	if num < -maxExp || num > maxExp || den < -maxExp || den > maxExp {
		return 0, 0, fmt.Errorf("power out of range (limit ±%d)", maxExp)
	}
	num, den = lowest(num, den)
	return num, den, nil
}

// lowest brings n/d (d != 0) to lowest terms with a positive denominator.
func lowest(n, d int) (int, int) {
	if d < 0 {
		n, d = -n, -d
	}
	a, b := n, d
	if a < 0 {
		a = -a
	}
	for b != 0 {
		a, b = b, a%b
	}
	return n / a, d / a // a = gcd(|n|, d) > 0
}

// scaleExp multiplies exponent e of the named base by num/den.
func scaleExp(e, num, den int, name string) (int, error) {
	if e*num%den != 0 {
		return 0, fmt.Errorf("the exponent of %s would be %s", name, fraction(e*num, den))
	}
	n := e * num / den
	if n < -maxExp || n > maxExp {
		return 0, fmt.Errorf("the exponent of %s would be %d (limit ±%d)", name, n, maxExp)
	}
	return n, nil
}

// fraction writes n/d in lowest terms.
func fraction(n, d int) string { return powText(lowest(n, d)) }

func powText(num, den int) string {
	if den == 1 {
		return strconv.Itoa(num)
	}
	return fmt.Sprintf("%d/%d", num, den)
}

// String writes d in coherent base units, currencies first, in the form Parse reads:
// "1", "kg", "$/kg", "kg*m^2/s^2", "EUR/$".
func (d Dim) String() string { return format(d.terms(false)) }

// Name is a plain quantity name for d: a well-known one where there is one ("time", "mass",
// "energy", "dimensionless", "currency $"), else the names of its parts, "×" between factors
// and "per" before the denominator: "currency $ per mass", "mass × time", "currency EUR per
// energy", "time^2". Names never show a base unit such as s, which the user may not have
// written.
func (d Dim) Name() string {
	if n, ok := quantityNames[d.String()]; ok {
		return n
	}
	var num, den []string
	add := func(name string, e int) {
		switch {
		case e > 0:
			num = append(num, name+expText(e))
		case e < 0:
			den = append(den, name+expText(-e))
		}
	}
	cs := currencies(d.cur())
	for _, code := range sortedCodes(cs) {
		add("currency "+code, cs[code])
	}
	if phys := d.phys(); !phys.IsDimensionless() {
		if n, ok := quantityNames[phys.String()]; ok {
			add(n, 1)
		} else if n, ok := quantityNames[Dim{}.Div(phys).String()]; ok {
			add(n, -1)
		} else {
			si := d.si()
			for _, b := range displayOrder {
				add(quantityNames[baseSymbol[b]], si[b])
			}
		}
	}
	s := strings.Join(num, " × ")
	if s == "" {
		s = "1"
	}
	if len(den) > 0 {
		s += " per " + strings.Join(den, " × ")
	}
	return s
}

var quantityNames = map[string]string{
	"1":          "dimensionless",
	"m":          "length",
	"kg":         "mass",
	"s":          "time",
	"A":          "electric current",
	"K":          "temperature",
	"mol":        "amount of substance",
	"cd":         "luminous intensity",
	"m^2":        "area",
	"m^3":        "volume",
	"m/s":        "speed",
	"kg*m/s^2":   "force",
	"kg/(m*s^2)": "pressure",
	"kg*m^2/s^2": "energy",
	"kg*m^2/s^3": "power",
}

// Currency reports the currency code when d is exactly one currency to the first power ("$",
// "EUR"): the dimension of an amount of money.
func (d Dim) Currency() (string, bool) { return d.singleCurrency() }

// singleCurrency reports the code when d is exactly one currency to the first power.
func (d Dim) singleCurrency() (string, bool) {
	if d.si() != ([numBase]int{}) {
		return "", false
	}
	code, n, ok := strings.Cut(d.cur(), ":")
	if !ok || n != "1" { // "$:1,EUR:-1" leaves n = "1,EUR:-1"
		return "", false
	}
	return code, true
}

// terms lists d as (symbol, exponent) pairs: currencies ("$" first, then codes in alphabetical
// order), then base units in display order. With named set, the physical part is written as
// one of N, Pa, J, W (or its reciprocal) when it matches one exactly.
func (d Dim) terms(named bool) []term {
	var ts []term
	cs := currencies(d.cur())
	for _, code := range sortedCodes(cs) {
		ts = append(ts, term{code, cs[code]})
	}
	phys := d.phys()
	if named {
		for _, n := range namedCoherent {
			switch phys {
			case n.dim:
				return append(ts, term{n.sym, 1})
			case Dim{}.Div(n.dim):
				return append(ts, term{n.sym, -1})
			}
		}
	}
	si := d.si()
	for _, b := range displayOrder {
		if e := si[b]; e != 0 {
			ts = append(ts, term{baseSymbol[b], e})
		}
	}
	return ts
}

// namedCoherent are the derived units with special names that Simplest prefers, in order.
var namedCoherent = []struct {
	sym string
	dim Dim
}{
	{"N", dimForce},
	{"Pa", dimPressure},
	{"J", dimEnergy},
	{"W", dimPower},
}

// currencies decodes the canonical currency string into a fresh map.
func currencies(s string) map[string]int {
	m := map[string]int{}
	if s == "" {
		return m
	}
	for _, part := range strings.Split(s, ",") {
		code, n, _ := strings.Cut(part, ":")
		e, _ := strconv.Atoi(n)
		m[code] += e
	}
	return m
}

// encodeCurrencies is the canonical form of a currency map: codes sorted, zeros dropped.
func encodeCurrencies(m map[string]int) string {
	var parts []string
	for _, code := range sortedCodes(m) {
		parts = append(parts, code+":"+strconv.Itoa(m[code]))
	}
	return strings.Join(parts, ",")
}

// sortedCodes lists the codes with a non-zero exponent; "$" sorts before letters.
func sortedCodes(m map[string]int) []string {
	var codes []string
	for code, n := range m {
		if n != 0 {
			codes = append(codes, code)
		}
	}
	sort.Strings(codes)
	return codes
}
