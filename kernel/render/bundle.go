package render

import (
	"encoding/json"
	"fmt"
	"html"
	"reflect"
	"sort"
	"strings"
)

// ResultMIME is the MIME type under which a notebook carries a result's JSON
// object: a vendor type of our own. A front end shows the representation it
// ranks first among those it can render; JupyterLab and Notebook 7 rank
// their JSON viewer (application/json, rank 0) ahead of HTML (rank 50), so a
// result sent as application/json would appear as a JSON tree. No front end
// renders this type, so each shows the HTML, and a program reading the
// notebook finds the object under it. `nudge exec --json` prints the same
// object, one per line.
const ResultMIME = "application/vnd.nudge.result+json"

// MaxBundleJSON is the most bytes of JSON a notebook keeps for one result
// (256 KiB). A larger result keeps the first elements of its longest lists
// and says what it left out; `nudge exec --json` always prints all of it.
// Notebook servers also limit output rates (the classic server to 1 MB a
// second), and a notebook is saved whole on every autosave.
const MaxBundleJSON = 256 << 10

// Bundle returns the result as a MIME bundle for Jupyter's display messages:
// text/plain (the table and its Unicode chart), text/html (the table, notes
// and chart: the one place the chart is stored, as an image in the HTML, or
// the Unicode chart when charts are text) and the JSON object under
// ResultMIME, cut to MaxBundleJSON. The caution is left out: a front end
// shows it once per cell (see CautionBundle).
func (r *Result) Bundle() map[string]any {
	text, body := strings.TrimRight(r.text, "\n"), r.html
	obj, cuts := r.bundleJSON(MaxBundleJSON)
	if len(cuts) > 0 {
		line := cutNote(cuts)
		text += "\n" + line
		body += `<p class="nudge-note">` + html.EscapeString(line) + `</p>`
	}
	b := map[string]any{"text/plain": text}
	if body != "" {
		b["text/html"] = wrapHTML(body)
	}
	// Already encoded: the message encoder copies it as it is.
	b[ResultMIME] = json.RawMessage(obj)
	return b
}

// CautionBundle is the MIME bundle of the caution, which a front end shows
// once after the results of a cell (or a report section) that carry it.
func CautionBundle() map[string]any {
	return map[string]any{
		"text/plain": Caution,
		"text/html": `<div class="nudge-caution tex2jax_ignore mathjax_ignore"><p style="font-size:85%;color:#555">` +
			html.EscapeString(Caution) + `</p></div>`,
	}
}

// BundleJSON returns the JSON object the notebook keeps for r: its whole
// JSON when that is at most MaxBundleJSON bytes long, else the object with
// its longest lists cut to their first elements and two fields more:
// "truncated", a list of {"field", "kept", "total"} naming each list cut
// (a list inside the elements of another is named "outer[].inner", and its
// total is its longest), and "truncated_note", which says how to get all of
// it.
func (r *Result) BundleJSON() []byte {
	b, _ := r.bundleJSON(MaxBundleJSON)
	return b
}

// cut is one list that a notebook's copy of a result shortens.
type cut struct {
	Field string `json:"field"`
	Kept  int    `json:"kept"`
	Total int    `json:"total"`
}

// smallResult is the number of list elements up to which a result is
// encoded whole before its size is checked.
const smallResult = 20000

func (r *Result) bundleJSON(limit int) ([]byte, []cut) {
	v := reflect.ValueOf(r.Data)
	if elements(v, smallResult) <= smallResult {
		if full := r.JSON(); len(full) <= limit {
			return full, nil
		}
	}
	for keep := 4096; keep >= 1; keep /= 4 {
		cuts := map[string]*cut{}
		b, err := json.Marshal(shorten(v, keep, "", cuts).Interface())
		if err != nil || len(b) < 2 || b[0] != '{' {
			break
		}
		list := make([]cut, 0, len(cuts))
		for _, c := range cuts {
			list = append(list, *c)
		}
		sort.Slice(list, func(i, j int) bool { return list[i].Field < list[j].Field })
		extra, _ := json.Marshal(struct {
			Truncated []cut  `json:"truncated"`
			Note      string `json:"truncated_note"`
		}{list, cutNote(list)})
		out := append(b[:len(b)-1:len(b)-1], ',')
		out = append(out, extra[1:]...)
		if len(out) <= limit {
			return out, list
		}
	}
	// Not even one element of each list fits: keep the kind and say why.
	kind := map[string]any{"kind": r.Kind, "truncated": []cut{},
		"truncated_note": fmt.Sprintf("the result is too large for a notebook (over %s of JSON): run the model with nudge exec --json, or nudge exec --csv DIR", kib(limit))}
	b, _ := json.Marshal(kind)
	return b, []cut{{Field: "(all)"}}
}

// cutNote says what a notebook's copy of a result leaves out and how to get
// it.
func cutNote(cuts []cut) string {
	if len(cuts) == 1 && cuts[0].Field == "(all)" {
		return "This result is too large for Jupyter to keep: run the model with nudge exec --json for its JSON, or nudge exec --csv DIR for CSV files."
	}
	var parts []string
	for _, c := range cuts {
		parts = append(parts, fmt.Sprintf("%s of the %s %s", count(c.Kept), count(c.Total), c.Field))
	}
	return fmt.Sprintf("Jupyter keeps the first %s in this result's JSON (at most %s): run the model with nudge exec --json for all of it, or nudge exec --csv DIR for CSV files.",
		strings.Join(parts, ", "), kib(MaxBundleJSON))
}

func kib(n int) string { return count(n>>10) + " KiB" }

// elements counts the list elements under v, nested lists included,
// stopping once the count passes limit.
func elements(v reflect.Value, limit int) int {
	n := 0
	var walk func(v reflect.Value)
	walk = func(v reflect.Value) {
		if n > limit {
			return
		}
		switch v.Kind() {
		case reflect.Pointer, reflect.Interface:
			if !v.IsNil() {
				walk(v.Elem())
			}
		case reflect.Struct:
			for i := range v.NumField() {
				if v.Type().Field(i).IsExported() {
					walk(v.Field(i))
				}
			}
		case reflect.Slice, reflect.Array:
			if v.Type().Elem().Kind() == reflect.Uint8 {
				return // []byte is one base64 string
			}
			n += v.Len()
			if holdsList(v.Type().Elem()) {
				for i := 0; i < v.Len() && n <= limit; i++ {
					walk(v.Index(i))
				}
			}
		case reflect.Map:
			n += v.Len()
		}
	}
	walk(v)
	return n
}

// shorten returns a copy of v with every list cut to its first keep
// elements, recording each list it cut under its JSON path in cuts.
func shorten(v reflect.Value, keep int, path string, cuts map[string]*cut) reflect.Value {
	switch v.Kind() {
	case reflect.Pointer:
		if v.IsNil() {
			return v
		}
		e := shorten(v.Elem(), keep, path, cuts)
		p := reflect.New(e.Type())
		p.Elem().Set(e)
		return p
	case reflect.Interface:
		if v.IsNil() {
			return v
		}
		out := reflect.New(v.Type()).Elem()
		out.Set(shorten(v.Elem(), keep, path, cuts))
		return out
	case reflect.Struct:
		out := reflect.New(v.Type()).Elem()
		out.Set(v)
		for i := range v.NumField() {
			f := v.Type().Field(i)
			name := jsonName(f)
			if !f.IsExported() || name == "-" || !holdsList(f.Type) {
				continue
			}
			if !f.Anonymous && path != "" {
				name = path + "." + name
			} else if f.Anonymous {
				name = path
			}
			out.Field(i).Set(shorten(v.Field(i), keep, name, cuts))
		}
		return out
	case reflect.Slice:
		if v.IsNil() || v.Type().Elem().Kind() == reflect.Uint8 {
			return v
		}
		n := v.Len()
		m := min(n, keep)
		if m < n {
			c := cuts[path]
			if c == nil {
				c = &cut{Field: path, Kept: m}
				cuts[path] = c
			}
			c.Total = max(c.Total, n)
		}
		out := reflect.MakeSlice(v.Type(), m, m)
		deep := holdsList(v.Type().Elem())
		for i := range m {
			if deep {
				out.Index(i).Set(shorten(v.Index(i), keep, path+"[]", cuts))
			} else {
				out.Index(i).Set(v.Index(i))
			}
		}
		return out
	}
	return v
}

// jsonName is the key encoding/json writes for f.
func jsonName(f reflect.StructField) string {
	tag := f.Tag.Get("json")
	if tag == "-" {
		return "-"
	}
	if name, _, _ := strings.Cut(tag, ","); name != "" {
		return name
	}
	return f.Name
}

// holdsList reports whether a value of type t can hold a list (a slice
// other than []byte) anywhere inside it.
func holdsList(t reflect.Type) bool {
	return holdsListSeen(t, map[reflect.Type]bool{})
}

func holdsListSeen(t reflect.Type, seen map[reflect.Type]bool) bool {
	if seen[t] {
		return false
	}
	seen[t] = true
	switch t.Kind() {
	case reflect.Slice:
		return t.Elem().Kind() != reflect.Uint8
	case reflect.Pointer, reflect.Array:
		return holdsListSeen(t.Elem(), seen)
	case reflect.Interface:
		return true
	case reflect.Struct:
		for i := range t.NumField() {
			if f := t.Field(i); f.IsExported() && holdsListSeen(f.Type, seen) {
				return true
			}
		}
	}
	return false
}
