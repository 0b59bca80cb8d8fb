package plotting

import (
	"strings"
	"unicode"
	"unicode/utf8"
)

// axisTitle joins a quantity's name and unit: "total [$]", or "total" when
// the unit is empty.
func axisTitle(name, u string) string {
	name, u = clean(name), clean(u)
	if u == "" || u == "1" {
		return name
	}
	if name == "" {
		return "[" + u + "]"
	}
	return name + " [" + u + "]"
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
