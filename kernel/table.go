package kernel

import (
	"html"
	"strings"
	"unicode/utf8"

	"github.com/nudge-dev/nudge/plotting"
)

// num formats a value for tables and messages, by the rules of
// plotting.FormatValue, so tables, charts and values read alike.
func num(v float64) string { return plotting.FormatValue(v, "") }

// withUnit joins a value and its unit: "$1,234", "12 kg", "4%", "0.5".
func withUnit(v float64, u string) string { return plotting.FormatValue(v, u) }

// table is a simple aligned table for text/plain and text/html.
type table struct {
	head  []string
	rows  [][]string
	right []bool // right-align column
}

func (t *table) add(cells ...string) { t.rows = append(t.rows, cells) }

func width(s string) int { return utf8.RuneCountInString(s) }

// text renders the table with columns padded to their widest cell.
func (t *table) text() string {
	w := make([]int, len(t.head))
	for i, h := range t.head {
		w[i] = width(h)
	}
	for _, r := range t.rows {
		for i, c := range r {
			if i < len(w) && width(c) > w[i] {
				w[i] = width(c)
			}
		}
	}
	var b strings.Builder
	line := func(cells []string) {
		for i, c := range cells {
			if i >= len(w) {
				break
			}
			pad := strings.Repeat(" ", w[i]-width(c))
			if i > 0 {
				b.WriteString("  ")
			}
			if i < len(t.right) && t.right[i] {
				b.WriteString(pad + c)
			} else if i == len(cells)-1 {
				b.WriteString(c)
			} else {
				b.WriteString(c + pad)
			}
		}
		b.WriteByte('\n')
	}
	line(t.head)
	sep := make([]string, len(w))
	for i := range w {
		sep[i] = strings.Repeat("─", w[i])
	}
	line(sep)
	for _, r := range t.rows {
		line(r)
	}
	return b.String()
}

// html renders the table as an HTML table with a caption.
func (t *table) html(caption string) string {
	var b strings.Builder
	b.WriteString(`<table class="nudge">`)
	if caption != "" {
		b.WriteString("<caption>" + html.EscapeString(caption) + "</caption>")
	}
	b.WriteString("<thead><tr>")
	for i, h := range t.head {
		b.WriteString(cellTag("th", i < len(t.right) && t.right[i], h))
	}
	b.WriteString("</tr></thead><tbody>")
	for _, r := range t.rows {
		b.WriteString("<tr>")
		for i, c := range r {
			b.WriteString(cellTag("td", i < len(t.right) && t.right[i], c))
		}
		b.WriteString("</tr>")
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
