package plotting

import (
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// FormatValue formats v for a person, followed or preceded by its unit.
//
// The rule, one for every magnitude a cost model produces:
//
//   - Values with 1e-4 <= |v| < 1e15 are written in plain decimal notation
//     with at least 4 significant digits; the whole-number part is never
//     rounded away, so money keeps every dollar: 1234567.8 gives
//     "1,234,568", 12.3456 gives "12.35", 0.012345 gives "0.01235".
//   - Digits left of the point are grouped in threes with commas.
//   - Trailing zeros after the point are dropped: 2.50 gives "2.5".
//   - Other non-zero values use scientific notation with 4 significant
//     digits: 1.5e-05, 2.346e+15.
//   - Zero (also -0) is "0"; NaN is "NaN"; infinities are "+Inf" and "-Inf"
//     (no unit is attached to NaN or infinities).
//
// The unit is placed by its kind: a currency symbol ($, €, £, ¥) goes before
// the number and after any minus sign ("-$1,234"); "%" follows the number
// directly ("12.5%"); any other unit follows after a space ("0.9 $/kg",
// "12 kg"). An empty unit, or the dimensionless "1", adds nothing.
func FormatValue(v float64, unit string) string {
	num := formatNumber(v)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return num
	}
	unit = strings.TrimSpace(unit)
	switch {
	case unit == "" || unit == "1":
		return num
	case unit == "%":
		return num + "%"
	case isCurrencySymbol(unit):
		if strings.HasPrefix(num, "-") {
			return "-" + unit + num[1:]
		}
		return unit + num
	default:
		return num + " " + unit
	}
}

func isCurrencySymbol(u string) bool {
	switch u {
	case "$", "€", "£", "¥":
		return true
	}
	return false
}

// formatNumber applies the numeric part of the FormatValue rule.
func formatNumber(v float64) string {
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
		// The decimal exponent of v rounded to 4 significant digits, read
		// from strconv so that 9.9996 counts as 10.00 and 100 as 1e+02.
		e := strconv.FormatFloat(a, 'e', 3, 64)
		exp, _ := strconv.Atoi(e[strings.IndexByte(e, 'e')+1:])
		decimals = max(3-exp, 0)
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

// trimMantissa drops trailing zeros of a mantissa: "1.500e-05" -> "1.5e-05".
func trimMantissa(s string) string {
	i := strings.IndexByte(s, 'e')
	if i < 0 {
		return s
	}
	m, e := s[:i], s[i:]
	if strings.Contains(m, ".") {
		m = strings.TrimRight(strings.TrimRight(m, "0"), ".")
	}
	return m + e
}

// groupThousands inserts commas into the integer part of a decimal string.
func groupThousands(s string) string {
	sign := ""
	if strings.HasPrefix(s, "-") {
		sign, s = "-", s[1:]
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

// formatPct writes a signed percentage for spider axes: "-30%", "0%", "+30%".
func formatPct(v float64) string {
	s := formatNumber(v)
	if v > 0 && s != "0" {
		s = "+" + s
	}
	return s + "%"
}

// axisTitle joins a quantity's name and unit: "total [$]", or "total" when
// the unit is empty.
func axisTitle(name, unit string) string {
	name, unit = clean(name), clean(unit)
	if unit == "" || unit == "1" {
		return name
	}
	if name == "" {
		return "[" + unit + "]"
	}
	return name + " [" + unit + "]"
}

// clean makes a label safe to draw and to embed in SVG, HTML and terminal
// text: invalid UTF-8 becomes U+FFFD, line breaks and tabs become spaces,
// other control characters are dropped, and outer spaces are trimmed.
func clean(s string) string {
	ok := utf8.ValidString(s)
	if ok {
		for _, r := range s {
			if unicode.IsControl(r) || r == 0xFFFE || r == 0xFFFF {
				ok = false
				break
			}
		}
	}
	if ok {
		return strings.TrimSpace(s)
	}
	var b strings.Builder
	for _, r := range strings.ToValidUTF8(s, "\uFFFD") {
		switch {
		case r == '\n' || r == '\r' || r == '\t':
			b.WriteByte(' ')
		case unicode.IsControl(r) || r == 0xFFFE || r == 0xFFFF:
		default:
			b.WriteRune(r)
		}
	}
	return strings.TrimSpace(b.String())
}

// truncate shortens s to at most n runes, ending in an ellipsis when cut.
func truncate(s string, n int) string {
	if n <= 0 {
		return ""
	}
	if utf8.RuneCountInString(s) <= n {
		return s
	}
	if n == 1 {
		return "…"
	}
	r := []rune(s)
	return strings.TrimRight(string(r[:n-1]), " ") + "…"
}
