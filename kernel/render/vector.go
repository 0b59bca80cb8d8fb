package render

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// maxVectorRows is how many elements a vector's table shows before its
// total: a vector of a thousand rows is summed up, never dumped.
const maxVectorRows = 10

// Vector renders the value of a vector: its first elements and a total
// (the JSON object holds every element).
func Vector(v *sens.VectorResult, o *Options) *Result {
	t := &table{head: []string{v.Noun, v.Name}, right: []bool{false, true}}
	shown := min(len(v.Values), maxVectorRows)
	col := unit.NewColumn(v.Unit, append(v.Values[:shown:shown], v.Total)...)
	for i := range shown {
		t.add(v.Keys[i], col.Format(v.Values[i]))
	}
	if rest := len(v.Values) - shown; rest > 0 {
		t.add(fmt.Sprintf("… %s more", count(rest)), "")
	}
	t.add("total", col.Format(v.Total))
	head := fmt.Sprintf("%s: %s %s over %s, total %s", v.Name, count(v.Count), plural(v.Count, v.Noun, v.Noun+"s"), v.Over, unit.Format(v.Total, v.Unit))
	return &Result{Kind: "vector", Data: v, width: o.width(), text: o.wrap(head) + "\n" + t.text(), html: t.html(head)}
}

// Table renders the loading of a table: its rows, key and columns.
func Table(r *sens.TableResult, o *Options) *Result {
	t := &table{head: []string{"column", "holds", "range"}, right: []bool{false, false, true}}
	for _, c := range r.Columns {
		switch {
		case c.Name == r.Key:
			t.add(c.Name, "key", fmt.Sprintf("%s rows", count(r.Rows)))
		case c.Type == "text" && c.Distinct > 1000:
			t.add(c.Name, "text", "more than 1,000 values")
		case c.Type == "text":
			t.add(c.Name, "text", fmt.Sprintf("%s %s", count(c.Distinct), plural(c.Distinct, "value", "values")))
		default:
			holds := "numbers"
			if c.Unit != "" {
				holds += " [" + c.Unit + "]"
			}
			col := unit.NewColumn(c.Unit, c.Min, c.Max)
			t.add(c.Name, holds, col.Format(c.Min)+" .. "+col.Format(c.Max))
		}
	}
	verb := "loaded"
	if r.Replaced {
		verb = "reloaded"
	}
	head := fmt.Sprintf("table %s %s: %s rows from %s, keyed by %s", r.Name, verb, count(r.Rows), r.Path, r.Key)
	return &Result{Kind: "table", Data: r, width: o.width(), text: o.wrap(head) + "\n" + t.text(), html: t.html(head)}
}
