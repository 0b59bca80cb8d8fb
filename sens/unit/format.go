package unit

import (
	"math"
	"strconv"
	"strings"
	"sync"
)

// This file holds nudge's one rule for writing a quantity for a person: the
// engine's messages, the charts and the tables all print numbers through it,
// so a value reads the same wherever it appears.

// Format writes v with its unit u for a person: "$97.41", "$150,800",
// "12 kg", "0.9 $/kg", "12.5%", "0.01235".
//
// A plain quantity (any unit but money) follows one rule for every magnitude
// a cost model produces:
//
//   - Values with 1e-4 <= |v| < 1e15 are written in decimal notation with at
//     least 4 significant digits; the whole-number part is never rounded
//     away: 1234567.8 gives "1,234,568", 12.3456 gives "12.35", 0.012345
//     gives "0.01235".
//   - Digits left of the point are grouped in threes with commas.
//   - Trailing zeros after the point are dropped: 2.50 gives "2.5".
//   - Other non-zero values use scientific notation with 4 significant
//     digits: 1.5e-05, 2.346e+15.
//   - Zero (also -0) is "0"; NaN is "NaN"; infinities are "+Inf" and "-Inf"
//     (no unit is attached to NaN or infinities).
//
// Money (a currency at its own scale: "$", "EUR", or the symbols €, £ and ¥)
// is written as a column of one value is (see Column): cents where they
// matter, "$2.50" and "$109.95", none for whole amounts or from $10,000 up,
// "$6" and "$150,800".
//
// The unit is placed by its kind: a currency symbol goes before the number
// and after any minus sign ("-$1,234"); "%" follows the number directly
// ("12.5%"); any other unit follows after a space ("0.9 $/kg", "150 EUR").
// An empty unit, or the dimensionless "1", adds nothing.
func Format(v float64, u string) string { return NewColumn(u, v).Format(v) }

// Signed is Format with a plus sign before a positive value, for changes:
// "+$45,000", "-1.2 h", "+30%". Zero has no sign.
func Signed(v float64, u string) string { return NewColumn(u, v).Signed(v) }

// Column formats the values of one table column, all in one unit, alike.
// A column of money takes one number of decimals for all its values, chosen
// from their magnitude (M, the largest |value|):
//
//	M >= 10,000, or every value a whole amount   no decimals: $150,800, $6
//	1 <= M < 10,000, or every value whole cents   cents: $2.50, $109.95, $0.25
//	1e-4 <= M < 1                                 four significant digits of M: $0.01857
//
// and outside 1e-4 <= M < 1e15 each value is written alone, as Format writes
// a plain quantity. Any other unit is written value by value by Format's
// rule, unless the column was made by Fixed.
type Column struct {
	unit     string
	place    placement
	decimals int // -1: each value by the plain rule
	money    bool
}

// placement says where a unit goes beside its number.
type placement int

const (
	noUnit   placement = iota
	before             // $12
	after              // 12 kg
	attached           // 12%
)

// moneyCents is the magnitude from which amounts are written without cents.
const moneyCents = 10_000

// NewColumn returns the format of a column of values in unit u.
func NewColumn(u string, values ...float64) Column {
	u = strings.TrimSpace(u)
	c := Column{unit: u, place: placeOf(u), decimals: -1, money: isMoney(u)}
	if !c.money {
		return c
	}
	m, whole, cents := 0.0, true, true
	for _, v := range values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		a := math.Abs(v)
		m = math.Max(m, a)
		whole = whole && math.Abs(a-math.Round(a)) < 0.005
		cents = cents && math.Abs(100*a-math.Round(100*a)) < 1e-6*math.Max(1, 100*a)
	}
	switch {
	case m == 0:
		c.decimals = 0
	case m < 1e-4 || m >= 1e15:
		// Written value by value, in scientific notation.
	case m >= moneyCents || whole:
		c.decimals = 0
	case m >= 1 || cents:
		c.decimals = 2
	default:
		c.decimals = max(2, 3-exponent(m))
	}
	return c
}

// Fixed returns a column of values in unit u written with exactly decimals
// digits after the point, for ratios that are compared row by row, such as
// elasticities ("+0.6492", "-0.1906").
func Fixed(u string, decimals int) Column {
	u = strings.TrimSpace(u)
	return Column{unit: u, place: placeOf(u), decimals: max(decimals, 0)}
}

// Aligned returns a column of values in unit u (shares such as "% of
// change") written with one number of decimals for all of them, as a money
// column is: four significant digits of the largest |value| M (two decimals
// for 10 <= M < 100: +68.55%, +7.88%; none from M >= 1,000), so that the
// column's points line up and its rows compare at a glance. Outside
// 1e-4 <= M < 1e15 each value is written alone by Format's rule.
func Aligned(u string, values ...float64) Column {
	u = strings.TrimSpace(u)
	c := Column{unit: u, place: placeOf(u), decimals: -1, money: isMoney(u)}
	m := 0.0
	for _, v := range values {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			m = math.Max(m, math.Abs(v))
		}
	}
	switch {
	case m == 0:
		c.decimals = 0
	case m < 1e-4 || m >= 1e15:
	default:
		c.decimals = max(3-exponent(m), 0)
	}
	return c
}

// Format writes v by the column's rule, with its unit.
func (c Column) Format(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return plain(v)
	}
	var num string
	if c.decimals < 0 || math.Abs(v) >= 1e15 {
		num = plain(v)
	} else {
		num = groupThousands(strconv.FormatFloat(v, 'f', c.decimals, 64))
		if strings.Trim(num, "-0.,") == "" {
			num = strings.TrimPrefix(num, "-") // no "-0.00"
		}
	}
	switch c.place {
	case before:
		if n, ok := strings.CutPrefix(num, "-"); ok {
			return "-" + c.unit + n
		}
		return c.unit + num
	case after:
		return num + " " + c.unit
	case attached:
		return num + c.unit
	}
	return num
}

// Signed is Format with a plus sign before a positive value.
func (c Column) Signed(v float64) string {
	s := c.Format(v)
	if v > 0 && !math.IsInf(v, 1) && strings.ContainsAny(s, "123456789") {
		return "+" + s
	}
	return s
}

// plain applies the numeric part of Format's rule for a plain quantity.
func plain(v float64) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return "+Inf"
	case math.IsInf(v, -1):
		return "-Inf"
	case v == 0:
		return "0"
	}
	a := math.Abs(v)
	if a < 1e-4 || a >= 1e15 {
		return trimMantissa(strconv.FormatFloat(v, 'e', 3, 64))
	}
	decimals := 0
	if a < 1000 {
		decimals = max(3-exponent(a), 0)
	}
	s := strconv.FormatFloat(v, 'f', decimals, 64)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if s == "-0" {
		return "0"
	}
	return groupThousands(s)
}

// exponent returns the decimal exponent of a > 0 rounded to 4 significant
// digits, read from strconv so that 9.9996 counts as 10.00 and 100 as 1e+02.
func exponent(a float64) int {
	e := strconv.FormatFloat(a, 'e', 3, 64)
	n, _ := strconv.Atoi(e[strings.IndexByte(e, 'e')+1:])
	return n
}

// trimMantissa drops trailing zeros of a mantissa: "1.500e-05" -> "1.5e-05".
func trimMantissa(s string) string {
	m, e, ok := strings.Cut(s, "e")
	if !ok {
		return s
	}
	if strings.Contains(m, ".") {
		m = strings.TrimRight(strings.TrimRight(m, "0"), ".")
	}
	return m + "e" + e
}

// groupThousands inserts commas into the integer part of a decimal string.
func groupThousands(s string) string {
	sign := ""
	if rest, ok := strings.CutPrefix(s, "-"); ok {
		sign, s = "-", rest
	}
	intPart, frac := s, ""
	if i := strings.IndexByte(s, '.'); i >= 0 {
		intPart, frac = s[:i], s[i:]
	}
	if len(intPart) <= 3 {
		return sign + intPart + frac
	}
	var b strings.Builder
	head := len(intPart) % 3
	if head > 0 {
		b.WriteString(intPart[:head])
	}
	for i := head; i < len(intPart); i += 3 {
		if b.Len() > 0 {
			b.WriteByte(',')
		}
		b.WriteString(intPart[i : i+3])
	}
	return sign + b.String() + frac
}

// currencySymbols are written before the number.
func isCurrencySymbol(u string) bool {
	switch u {
	case "$", "€", "£", "¥":
		return true
	}
	return false
}

func placeOf(u string) placement {
	switch {
	case u == "" || u == "1":
		return noUnit
	case u == "%":
		return attached
	case isCurrencySymbol(u):
		return before
	}
	return after
}

// moneyUnits caches whether a unit text is money, since tables and charts
// format many values in few units.
var moneyUnits sync.Map // string -> bool

// isMoney reports whether u is a currency at its own scale: "$", "EUR" or a
// currency symbol, but not "k$" or "$/h".
func isMoney(u string) bool {
	switch {
	case u == "" || u == "1" || u == "%":
		return false
	case isCurrencySymbol(u):
		return true
	}
	if m, ok := moneyUnits.Load(u); ok {
		return m.(bool)
	}
	p, err := Parse(u)
	_, single := p.Dim.singleCurrency()
	m := err == nil && single && p.Factor == 1
	moneyUnits.Store(u, m)
	return m
}
