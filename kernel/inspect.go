package kernel

import (
	"fmt"
	"html"
	"math"
	"strings"

	"github.com/nudge-dev/nudge/kernel/jupyter"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Inspect describes what is under the cursor: an input's value, range and
// distribution in its unit; a formula's text, value, unit and top drivers; a
// function, distribution or command's documentation; a unit in brackets (or
// a unit symbol that names nothing else): its symbols, dimension and size.
func (h *Handler) Inspect(code string, cursor int, detail int) (*jupyter.Bundle, bool) {
	cursor = min(max(cursor, 0), len(code))
	start, end := wordAt(code, cursor)
	if start == end && cursor > 0 {
		start, end = wordAt(code, cursor-1)
	}
	word := code[start:end]
	text := ""
	if u, ok := bracketAt(code, cursor); ok {
		if d, err := unit.Describe(u); err == nil {
			text = "unit " + d
		}
	} else if word != "" {
		text = h.describe(word, detail)
		if text == "" {
			if d, err := unit.Describe(word); err == nil {
				text = "unit " + d
			}
		}
	}
	if text == "" {
		return nil, false
	}
	return &jupyter.Bundle{Data: map[string]any{
		"text/plain": text,
		"text/html":  "<pre>" + html.EscapeString(text) + "</pre>",
	}, Metadata: map[string]any{}}, true
}

func (h *Handler) describe(word string, detail int) string {
	if prog, err := h.in.Model.Compile(); err == nil {
		if in, f := prog.Lookup(word); in != nil {
			s := fmt.Sprintf("input %s = %s\nrange: %s .. %s (%s)", in.Name, unit.Format(in.Value, in.Unit),
				unit.Format(in.Low, in.Unit), unit.Format(in.High, in.Unit), rangeSource[in.Source])
			if in.Dist != nil {
				// Every distribution's parameters are values of the input.
				ps := make([]string, len(in.Dist.Params()))
				for i, v := range in.Dist.Params() {
					ps[i] = unit.Format(v, in.Unit)
				}
				s += fmt.Sprintf("\ndistribution: %s(%s), mean %s, sd %s", in.Dist.Name(), strings.Join(ps, ", "),
					unit.Format(in.Dist.Mean(), in.Unit), unit.Format(in.Dist.StdDev(), in.Unit))
			}
			return s + fmt.Sprintf("\ndeclared at %s", in.Pos)
		} else if f != nil {
			s := fmt.Sprintf("%s = %s", f.Name, f.Text())
			if f.Declared {
				s += "  [" + f.Unit + "]"
			}
			if pr, err := prog.Problem(f.Name); err == nil {
				if d, err := sens.Drivers(pr, nil); err == nil {
					s += "\nvalue: " + unit.Format(d.Value, d.Unit)
					n := 3
					if detail > 0 {
						n = len(d.Inputs)
					}
					el := unit.Fixed("", 4)
					var top []string
					for i, x := range d.Inputs {
						if i >= n || x.Elasticity == 0 || math.IsNaN(x.Elasticity) { // NaN: undefined, the output is 0
							break
						}
						top = append(top, fmt.Sprintf("%s (elasticity %s)", x.Name, el.Signed(x.Elasticity)))
					}
					if len(top) > 0 {
						s += "\ntop drivers: " + strings.Join(top, ", ")
					}
				} else {
					s += "\nvalue: " + err.Error()
				}
			}
			return s + fmt.Sprintf("\ndefined at %s", f.Pos())
		}
	}
	for _, fn := range sens.Functions {
		if fn.Name == word {
			return fmt.Sprintf("function %s: %s", fn.Name, fn.Doc)
		}
	}
	for _, fn := range sens.VectorFunctions {
		if fn.Name == word {
			return fmt.Sprintf("function %s: %s", fn.Sig, fn.Doc)
		}
	}
	if prog, err := h.in.Model.Compile(); err == nil {
		if v := prog.Vector(word); v != nil {
			u := v.Unit
			if u == "" {
				u = "plain numbers"
			}
			return fmt.Sprintf("vector %s %s: %s %ss over %s, in %s\ndeclared at %s", v.Kind, v.Name, unit.Format(float64(v.Len()), ""), v.Noun, v.Over, u, v.Pos)
		}
	}
	if d := sens.LookupDist(word); d != nil {
		return fmt.Sprintf("distribution %s(%s): %s\nexample: %s", d.Name, strings.Join(d.Params, ", "), d.Doc, d.Example)
	}
	if c := commands[word]; c != nil {
		return "command " + c.Usage() + ": " + c.Doc + ". Example: " + c.Example
	}
	return ""
}

// rangeSource says where an input's range came from.
var rangeSource = map[sens.RangeSource]string{
	sens.RangeExplicit:     "as declared",
	sens.RangePercent:      "a percentage of the value, as declared",
	sens.RangeDistribution: "10th to 90th percentile of the distribution",
	sens.RangeDefault:      fmt.Sprintf("none declared: the default ±%d%% of the value", sens.DefaultRangePct),
}

// bracketAt returns the text between the brackets around byte offset cursor
// on its line, if the cursor is inside a unit.
func bracketAt(code string, cursor int) (string, bool) {
	ls := strings.LastIndexByte(code[:cursor], '\n') + 1
	le := strings.IndexByte(code[cursor:], '\n')
	if le < 0 {
		le = len(code)
	} else {
		le += cursor
	}
	open := strings.LastIndexByte(code[ls:cursor], '[')
	if open < 0 || strings.Contains(code[ls+open:cursor], "]") {
		return "", false
	}
	open += ls
	end := strings.IndexByte(code[cursor:le], ']')
	if end < 0 {
		return strings.TrimSpace(code[open+1 : le]), true
	}
	return strings.TrimSpace(code[open+1 : cursor+end]), true
}
