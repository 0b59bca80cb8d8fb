// Package notebook reads and writes Jupyter notebooks in the nbformat 4
// format (the JSON document of nbformat 4.5: cells with ids, outputs as
// MIME bundles), the way nbformat itself writes them: keys sorted, one space
// of indent, text split into lines, and a final newline, so a notebook that
// nudge ran reads and diffs like one Jupyter saved.
//
// References:
//   - The Jupyter Notebook Format, nbformat 4.5 (nbformat.readthedocs.io,
//     "The Notebook file format"; the JSON schema nbformat.v4.5.schema.json).
package notebook

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

// Notebook is an nbformat 4 notebook.
type Notebook struct {
	Metadata      map[string]any
	Nbformat      int
	NbformatMinor int
	Cells         []*Cell
}

// Cell is one cell: "code", "markdown" or "raw".
type Cell struct {
	ID       string
	Type     string
	Source   string
	Metadata map[string]any
	// Attachments are a markdown cell's embedded files, by name: each a
	// MIME bundle (a type to base64 data).
	Attachments map[string]any
	// ExecutionCount is a code cell's number, nil when it has not run.
	ExecutionCount *int
	Outputs        []*Output
}

// Output is one output of a code cell, as nbformat stores it.
type Output struct {
	// Type is "stream", "display_data", "execute_result" or "error".
	Type string
	// Name and Text are a stream's ("stdout" or "stderr").
	Name, Text string
	// Data and Metadata are a display's or a result's MIME bundle.
	Data     map[string]any
	Metadata map[string]any
	// ExecutionCount is an execute_result's.
	ExecutionCount *int
	// Ename, Evalue and Traceback are an error's.
	Ename, Evalue string
	Traceback     []string
}

// New returns an empty nbformat 4.5 notebook.
func New() *Notebook {
	return &Notebook{Metadata: map[string]any{}, Nbformat: 4, NbformatMinor: 5}
}

// Read decodes a notebook. Only nbformat 4 is accepted.
func Read(data []byte) (*Notebook, error) {
	var raw struct {
		Metadata      map[string]any    `json:"metadata"`
		Nbformat      int               `json:"nbformat"`
		NbformatMinor int               `json:"nbformat_minor"`
		Cells         []json.RawMessage `json:"cells"`
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	if err := dec.Decode(&raw); err != nil {
		return nil, fmt.Errorf("not a notebook: %v", err)
	}
	if raw.Nbformat != 4 {
		if raw.Nbformat == 0 {
			return nil, errors.New("not a notebook: no nbformat version")
		}
		return nil, fmt.Errorf("nbformat %d is not supported (only 4; open and save it in Jupyter to convert it)", raw.Nbformat)
	}
	nb := &Notebook{Metadata: raw.Metadata, Nbformat: 4, NbformatMinor: raw.NbformatMinor}
	if nb.Metadata == nil {
		nb.Metadata = map[string]any{}
	}
	for i, rc := range raw.Cells {
		c, err := readCell(rc)
		if err != nil {
			return nil, fmt.Errorf("cell %d: %v", i+1, err)
		}
		nb.Cells = append(nb.Cells, c)
	}
	return nb, nil
}

func readCell(data []byte) (*Cell, error) {
	var rc struct {
		ID             string            `json:"id"`
		CellType       string            `json:"cell_type"`
		Source         any               `json:"source"`
		Metadata       map[string]any    `json:"metadata"`
		Attachments    map[string]any    `json:"attachments"`
		ExecutionCount *int              `json:"execution_count"`
		Outputs        []json.RawMessage `json:"outputs"`
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	if err := dec.Decode(&rc); err != nil {
		return nil, err
	}
	switch rc.CellType {
	case "code", "markdown", "raw":
	default:
		return nil, fmt.Errorf("unknown cell type %q", rc.CellType)
	}
	src, err := multiline(rc.Source)
	if err != nil {
		return nil, fmt.Errorf("source: %v", err)
	}
	c := &Cell{ID: rc.ID, Type: rc.CellType, Source: src, Metadata: rc.Metadata, Attachments: rc.Attachments, ExecutionCount: rc.ExecutionCount}
	if c.Metadata == nil {
		c.Metadata = map[string]any{}
	}
	for j, ro := range rc.Outputs {
		o, err := readOutput(ro)
		if err != nil {
			return nil, fmt.Errorf("output %d: %v", j+1, err)
		}
		c.Outputs = append(c.Outputs, o)
	}
	return c, nil
}

func readOutput(data []byte) (*Output, error) {
	var ro struct {
		OutputType     string         `json:"output_type"`
		Name           string         `json:"name"`
		Text           any            `json:"text"`
		Data           map[string]any `json:"data"`
		Metadata       map[string]any `json:"metadata"`
		ExecutionCount *int           `json:"execution_count"`
		Ename          string         `json:"ename"`
		Evalue         string         `json:"evalue"`
		Traceback      []string       `json:"traceback"`
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	if err := dec.Decode(&ro); err != nil {
		return nil, err
	}
	o := &Output{Type: ro.OutputType, Name: ro.Name, Metadata: ro.Metadata, ExecutionCount: ro.ExecutionCount,
		Ename: ro.Ename, Evalue: ro.Evalue, Traceback: ro.Traceback}
	switch ro.OutputType {
	case "stream":
		text, err := multiline(ro.Text)
		if err != nil {
			return nil, fmt.Errorf("text: %v", err)
		}
		o.Text = text
	case "display_data", "execute_result":
		o.Data = map[string]any{}
		for k, v := range ro.Data {
			if isJSONType(k) {
				o.Data[k] = v
				continue
			}
			s, err := multiline(v)
			if err != nil {
				return nil, fmt.Errorf("%s: %v", k, err)
			}
			o.Data[k] = s
		}
		if o.Metadata == nil {
			o.Metadata = map[string]any{}
		}
	case "error":
		if o.Traceback == nil {
			o.Traceback = []string{}
		}
	default:
		return nil, fmt.Errorf("unknown output type %q", ro.OutputType)
	}
	return o, nil
}

// multiline joins nbformat's multi-line string: a string or a list of
// strings.
func multiline(v any) (string, error) {
	switch v := v.(type) {
	case nil:
		return "", nil
	case string:
		return v, nil
	case []any:
		var b strings.Builder
		for _, s := range v {
			str, ok := s.(string)
			if !ok {
				return "", fmt.Errorf("a list of lines holds %s", jsonKind(s))
			}
			b.WriteString(str)
		}
		return b.String(), nil
	}
	return "", fmt.Errorf("text is %s, not a string or a list of lines", jsonKind(v))
}

// jsonKind names the JSON kind of a decoded value for messages.
func jsonKind(v any) string {
	switch v.(type) {
	case json.Number, float64:
		return "a number"
	case bool:
		return "a boolean"
	case map[string]any:
		return "an object"
	case []any:
		return "a list"
	case nil:
		return "null"
	}
	return "a string"
}

// isJSONType reports whether a MIME type's data is JSON, kept as it is
// rather than as text: application/json and application/*+json.
func isJSONType(mime string) bool {
	return mime == "application/json" || strings.HasPrefix(mime, "application/") && strings.HasSuffix(mime, "+json")
}

// splitLines splits text into lines that keep their newlines, as nbformat
// stores multi-line strings.
func splitLines(s string) []string {
	lines := []string{}
	for s != "" {
		i := strings.IndexByte(s, '\n')
		if i < 0 {
			lines = append(lines, s)
			break
		}
		lines = append(lines, s[:i+1])
		s = s[i+1:]
	}
	return lines
}

// Marshal encodes the notebook as nbformat writes it: keys sorted, one space
// of indent, multi-line text as lists of lines, non-ASCII text as it is, and
// a final newline.
func (nb *Notebook) Marshal() ([]byte, error) {
	cells := make([]any, 0, len(nb.Cells))
	for _, c := range nb.Cells {
		cells = append(cells, c.tree())
	}
	meta := nb.Metadata
	if meta == nil {
		meta = map[string]any{}
	}
	doc := pyNumbers(map[string]any{"cells": cells, "metadata": meta, "nbformat": nb.Nbformat, "nbformat_minor": nb.NbformatMinor})
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", " ")
	if err := enc.Encode(doc); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

func (c *Cell) tree() map[string]any {
	meta := c.Metadata
	if meta == nil {
		meta = map[string]any{}
	}
	t := map[string]any{"cell_type": c.Type, "metadata": meta, "source": splitLines(c.Source)}
	if c.ID != "" {
		t["id"] = c.ID
	}
	if c.Type != "code" {
		if len(c.Attachments) > 0 {
			t["attachments"] = c.Attachments
		}
		return t
	}
	if c.ExecutionCount != nil {
		t["execution_count"] = *c.ExecutionCount
	} else {
		t["execution_count"] = nil
	}
	outs := make([]any, 0, len(c.Outputs))
	for _, o := range c.Outputs {
		outs = append(outs, o.tree())
	}
	t["outputs"] = outs
	return t
}

func (o *Output) tree() map[string]any {
	t := map[string]any{"output_type": o.Type}
	switch o.Type {
	case "stream":
		t["name"], t["text"] = o.Name, splitLines(o.Text)
	case "display_data", "execute_result":
		data := map[string]any{}
		for k, v := range o.Data {
			if s, ok := v.(string); ok && !isJSONType(k) {
				data[k] = splitLines(s)
			} else {
				data[k] = v
			}
		}
		meta := o.Metadata
		if meta == nil {
			meta = map[string]any{}
		}
		t["data"], t["metadata"] = data, meta
		if o.Type == "execute_result" {
			if o.ExecutionCount != nil {
				t["execution_count"] = *o.ExecutionCount
			} else {
				t["execution_count"] = nil
			}
		}
	case "error":
		tb := o.Traceback
		if tb == nil {
			tb = []string{}
		}
		t["ename"], t["evalue"], t["traceback"] = o.Ename, o.Evalue, tb
	}
	return t
}

// MIMETypes returns the types of a display's data in a fixed order (sorted),
// for callers that walk a bundle.
func (o *Output) MIMETypes() []string {
	keys := make([]string, 0, len(o.Data))
	for k := range o.Data {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

// Text returns a display's data of one MIME type as text ("" when the
// bundle has none, or it is JSON).
func (o *Output) DataText(mime string) string {
	s, _ := o.Data[mime].(string)
	return s
}

// CodeText returns the text of the notebook's code cells in order, each
// ending with a newline: the model as the notebook states it.
func (nb *Notebook) CodeText() string {
	var b strings.Builder
	for _, c := range nb.Cells {
		if c.Type != "code" {
			continue
		}
		b.WriteString(c.Source)
		if !strings.HasSuffix(c.Source, "\n") {
			b.WriteByte('\n')
		}
	}
	return b.String()
}

// pyNumber is a number written as Python's json module writes it.
type pyNumber string

func (n pyNumber) MarshalJSON() ([]byte, error) { return []byte(n), nil }

// pyNumbers returns v with every number as nbformat writes it through
// Python's json module: an integer as written, any other number as
// Python's repr of the float: the shortest digits that read back to the
// same float, in fixed notation with at least one decimal when its decimal
// exponent e is -5 < e < 16, else in scientific notation with a signed
// exponent of at least two digits (1.5e-05, 1e+16).
func pyNumbers(v any) any {
	switch v := v.(type) {
	case map[string]any:
		out := make(map[string]any, len(v))
		for k, x := range v {
			out[k] = pyNumbers(x)
		}
		return out
	case []any:
		out := make([]any, len(v))
		for i, x := range v {
			out[i] = pyNumbers(x)
		}
		return out
	case json.Number:
		if !strings.ContainsAny(string(v), ".eE") {
			return v
		}
		f, err := strconv.ParseFloat(string(v), 64)
		if err != nil {
			return v
		}
		return pyNumber(pyRepr(f))
	case float64:
		return pyNumber(pyRepr(v))
	}
	return v
}

// pyRepr formats f as Python's repr(float) does.
func pyRepr(f float64) string {
	if f == 0 {
		if math.Signbit(f) {
			return "-0.0"
		}
		return "0.0"
	}
	e := strconv.FormatFloat(f, 'e', -1, 64)
	exp, _ := strconv.Atoi(e[strings.IndexByte(e, 'e')+1:])
	if exp < -4 || exp >= 16 {
		return e
	}
	s := strconv.FormatFloat(f, 'f', -1, 64)
	if !strings.Contains(s, ".") {
		s += ".0"
	}
	return s
}
