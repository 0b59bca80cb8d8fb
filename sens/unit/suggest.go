package unit

import (
	"fmt"
	"maps"
	"slices"
	"strings"
	"unicode/utf8"
)

// unknown is the message for a symbol that lookup rejects: a specific explanation for a few
// known traps, else "unknown unit" with up to three suggestions.
func unknown(name string) string {
	switch name {
	case "ton", "tons":
		return fmt.Sprintf("ambiguous unit %q: write t for the tonne (1000 kg); short and long tons are not supported", name)
	case "°C", "degC", "℃", "°F", "degF", "℉":
		return fmt.Sprintf("temperature scale %q has an offset and cannot scale a value: use K for temperature differences", name)
	}
	if c, ok := strings.CutSuffix(name, "M"); ok && isCurrencySymbol(c) {
		return fmt.Sprintf("ambiguous unit %q: M stands for a thousand in some trades and a million in others: write M%s (or %sMM) for a million, k%s for a thousand", name, c, c, c)
	}
	if msg, ok := countWords[strings.ToLower(name)]; ok {
		return fmt.Sprintf("unknown unit %q: %s", name, msg)
	}
	if isCode(name) && !foldedSymbols[strings.ToLower(name)] {
		msg := fmt.Sprintf("unknown unit %q: not an ISO 4217 currency code", name)
		if s := suggest(name); len(s) > 0 {
			msg += fmt.Sprintf(" (did you mean %s?)", orList(s))
		}
		return msg + "; a count has no unit: leave the brackets out, or write [1]"
	}
	if s := suggest(name); len(s) > 0 {
		return fmt.Sprintf("unknown unit %q (did you mean %s?)", name, orList(s))
	}
	return fmt.Sprintf("unknown unit %q", name)
}

// suggest proposes symbols for a name that is not one, strongest evidence first: the same
// letters in another case ("KG", "mw"), a long name or plural ("hour", "lbs"), an ISO 4217 code
// written in lower case ("eur"), else the
// symbols or long names closest by edit distance (at most 1 for names of 3 to 5 characters,
// 2 for longer).
func suggest(name string) []string {
	var out []string
	for _, e := range table {
		if strings.EqualFold(e.sym, name) {
			out = append(out, e.sym)
		}
	}
	if len(out) > 0 {
		return out
	}
	lower := strings.ToLower(name)
	for _, s := range []string{lower, strings.TrimSuffix(lower, "s"), strings.TrimSuffix(lower, "es")} {
		if sym, ok := longNames[s]; ok {
			return []string{sym}
		}
	}
	if sym := strings.TrimSuffix(name, "s"); sym != name && sym != "" {
		if _, ok := bySymbol[sym]; ok {
			return []string{sym}
		}
	}
	if up := strings.ToUpper(name); isCurrency(up) && up != name {
		return []string{up}
	}
	n := utf8.RuneCountInString(name)
	limit := 2
	switch {
	case n <= 2:
		return nil
	case n <= 5:
		limit = 1
	}
	best := limit + 1
	consider := func(word, sym string) {
		// The distance is at least the difference of the lengths: a
		// name much longer than every unit (a line of a megabyte) costs
		// nothing per unit.
		if m := utf8.RuneCountInString(word); n-m > best || m-n > best {
			return
		}
		d := editDistance(name, word)
		switch {
		case d < best:
			best, out = d, []string{sym}
		case d == best && len(out) < 3 && !slices.Contains(out, sym):
			out = append(out, sym)
		}
	}
	for _, e := range table {
		consider(e.sym, e.sym)
	}
	for _, w := range slices.Sorted(maps.Keys(longNames)) {
		consider(w, longNames[w])
	}
	return out
}

// longNames maps words people write for a unit to its symbol (for suggestions only).
var longNames = map[string]string{
	"second": "s", "sec": "s", "minute": "min", "hour": "h", "day": "d", "week": "wk",
	"month": "mo", "year": "yr",
	"metre": "m", "meter": "m", "kilometre": "km", "kilometer": "km", "centimetre": "cm",
	"centimeter": "cm", "millimetre": "mm", "millimeter": "mm", "inch": "in", "foot": "ft",
	"feet": "ft", "yard": "yd", "mile": "mi",
	"gram": "g", "kilogram": "kg", "kilo": "kg", "tonne": "t", "pound": "lb", "ounce": "oz",
	"litre": "L", "liter": "L", "gallon": "gal", "barrel": "bbl", "hectare": "ha", "acre": "ac",
	"joule": "J", "watt": "W", "kilowatt": "kW", "newton": "N", "pascal": "Pa",
	"horsepower": "hp", "ampere": "A", "amp": "A", "kelvin": "K", "mole": "mol", "candela": "cd",
	"percent": "%", "pct": "%", "dollar": "$", "euro": "EUR", "piece": "pc", "item": "each",
}

// countWords are words for counts of people or things, which have no unit, with what to write
// instead. Person-hours are hours: a count of people times a time is a time.
var countWords = func() map[string]string {
	people := "a count of people has no unit: leave the brackets out or write [1] (person-hours are [h], a cost per person [$])"
	hours := "person-hours are hours: write [h] (a count of people has no unit)"
	m := map[string]string{}
	for _, w := range []string{"fte", "ftes", "person", "persons", "people", "head", "heads", "headcount", "crew", "worker", "workers", "staff", "man", "men", "pax"} {
		m[w] = people
	}
	for _, w := range []string{"manhour", "manhours", "personhour", "personhours", "mh", "mhr", "mhrs", "ph", "phr"} {
		m[w] = hours
	}
	return m
}()

// isCode reports whether name looks like a currency code: three upper-case ASCII letters.
func isCode(name string) bool {
	if len(name) != 3 {
		return false
	}
	for i := 0; i < 3; i++ {
		if name[i] < 'A' || name[i] > 'Z' {
			return false
		}
	}
	return true
}

// orList writes "a", "a or b", "a, b or c".
func orList(s []string) string {
	if len(s) == 1 {
		return s[0]
	}
	return strings.Join(s[:len(s)-1], ", ") + " or " + s[len(s)-1]
}

// editDistance is the Levenshtein distance between a and b, counted in runes.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}
