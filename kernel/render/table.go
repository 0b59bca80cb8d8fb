package render

import (
	"fmt"
	"html"
	"math"
	"sort"
	"strings"
	"unicode/utf8"
)

// table is an aligned table, written as text and as HTML from one set of
// cells, so both show the same numbers.
type table struct {
	head  []string
	rows  [][]string
	right []bool // right-align column
	// textOnly is the number of trailing columns left out of the HTML (Unicode
	// bars, which a chart shows better).
	textOnly int
}

func (t *table) add(cells ...string) { t.rows = append(t.rows, cells) }

func width(s string) int { return utf8.RuneCountInString(s) }

// shown returns the rows a table shows, at most maxTableRows, and a line
// that counts the rest ("" when none is left out). Renderers that choose their
// own rows (the largest bars, evenly spread points) stay under the cap; this
// bounds any other table, however long its result.
func (t *table) shown() ([][]string, string) {
	if len(t.rows) <= maxTableRows {
		return t.rows, ""
	}
	n := len(t.rows) - maxTableRows
	return t.rows[:maxTableRows], fmt.Sprintf("… and %s more %s (the JSON holds all of them)", count(n), plural(n, "row", "rows"))
}

// text renders the table with columns padded to their widest cell.
func (t *table) text() string {
	rows, more := t.shown()
	w := make([]int, len(t.head))
	for i, h := range t.head {
		w[i] = width(h)
	}
	for _, r := range rows {
		for i, c := range r {
			if i < len(w) && width(c) > w[i] {
				w[i] = width(c)
			}
		}
	}
	var b strings.Builder
	line := func(cells []string) {
		var l strings.Builder
		for i, c := range cells {
			if i >= len(w) {
				break
			}
			pad := strings.Repeat(" ", w[i]-width(c))
			if i > 0 {
				l.WriteString("  ")
			}
			if i < len(t.right) && t.right[i] {
				l.WriteString(pad + c)
			} else {
				l.WriteString(c + pad)
			}
		}
		b.WriteString(strings.TrimRight(l.String(), " ") + "\n")
	}
	line(t.head)
	sep := make([]string, len(w))
	for i := range w {
		sep[i] = strings.Repeat("─", w[i])
	}
	line(sep)
	for _, r := range rows {
		line(r)
	}
	if more != "" {
		b.WriteString(more + "\n")
	}
	return b.String()
}

// html renders the table as an HTML table with a caption.
func (t *table) html(caption string) string {
	n := len(t.head) - t.textOnly
	var b strings.Builder
	b.WriteString(`<table class="nudge">`)
	if caption != "" {
		b.WriteString("<caption>" + html.EscapeString(caption) + "</caption>")
	}
	b.WriteString("<thead><tr>")
	for i, h := range t.head[:n] {
		b.WriteString(cellTag("th", i < len(t.right) && t.right[i], h))
	}
	b.WriteString("</tr></thead><tbody>")
	rows, more := t.shown()
	for _, r := range rows {
		b.WriteString("<tr>")
		for i, c := range r[:min(n, len(r))] {
			b.WriteString(cellTag("td", i < len(t.right) && t.right[i], c))
		}
		b.WriteString("</tr>")
	}
	if more != "" {
		fmt.Fprintf(&b, `<tr class="nudge-more"><td colspan="%d">%s</td></tr>`, n, html.EscapeString(more))
	}
	b.WriteString("</tbody></table>")
	return b.String()
}

func cellTag(tag string, right bool, s string) string {
	style := ""
	if right {
		style = ` style="text-align:right"`
	}
	return "<" + tag + style + ">" + html.EscapeString(s) + "</" + tag + ">"
}

// bar draws a fraction 0..1 as Unicode block characters, eighths included.
func bar(frac float64, width int) string {
	if !(frac > 0) { // NaN too
		return ""
	}
	frac = math.Min(frac, 1)
	eighths := int(frac*float64(width)*8 + 0.5)
	s := strings.Repeat("█", eighths/8)
	if r := eighths % 8; r > 0 {
		s += string([]rune("▏▎▍▌▋▊▉")[r-1])
	}
	return s
}

// Bar draws a fraction 0..1 as a bar of Unicode block characters width
// columns long at most, eighths included: a progress line's bar.
func Bar(frac float64, width int) string { return bar(frac, width) }

// evenIndices returns at most limit indices of 0..n-1 evenly spread, both ends
// included, plus every index in keep (the even ones are one fewer for each
// kept index not among them), in ascending order.
func evenIndices(n, limit int, keep ...int) []int {
	if n <= limit {
		idx := make([]int, n)
		for j := range idx {
			idx[j] = j
		}
		return idx
	}
	m := max(limit-len(keep), 2)
	seen := map[int]bool{}
	var idx []int
	add := func(k int) {
		if k >= 0 && k < n && !seen[k] {
			seen[k] = true
			idx = append(idx, k)
		}
	}
	for j := range m {
		add(int(math.Round(float64(j) * float64(n-1) / float64(m-1))))
	}
	for _, k := range keep {
		add(k)
	}
	sort.Ints(idx)
	return idx
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// wrapExpr puts an output written as an expression in parentheses, for
// notation such as ∂(y / a)/∂input.
func wrapExpr(name string) string {
	if strings.ContainsAny(name, " +-*/^()") {
		return "(" + name + ")"
	}
	return name
}
