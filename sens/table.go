package sens

import (
	"bytes"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Table is a table read from a CSV file: a header of column names (with a
// unit in brackets for a quantity: "mass [kg]"), one row per line, and a
// key column whose values name the rows. A Table is read-only once read.
type Table struct {
	Name    string
	Path    string   // the file, as written in the model
	Key     string   // the key column's name
	Keys    []string // the key of each row, in file order
	Columns []*Column

	lines  []int // the file's line of each row
	col    map[string]int
	keyRow map[string]int
}

// Column is one column of a table: numbers (in Unit) or text.
type Column struct {
	Name   string // the header's name, spaces and '-' made '_'
	Header string // the header cell as written
	Unit   string // the unit in the header; "" for plain numbers and text
	Num    []float64
	Text   []string // set for a text column, and for the key column

	u      unit.Unit
	line   int // the header's line and column, for messages
	column int
	// notNum is the first value of a column without a unit that is not a
	// number (which made it a text column): its row, and the value.
	notNum    int
	notNumVal string
}

// IsText reports whether c holds text rather than numbers.
func (c *Column) IsText() bool { return c.Num == nil }

// Column returns the column called name, or nil.
func (t *Table) Column(name string) *Column {
	if i, ok := t.col[name]; ok {
		return t.Columns[i]
	}
	return nil
}

// Row returns the row of the key k.
func (t *Table) Row(k string) (int, bool) {
	i, ok := t.keyRow[k]
	return i, ok
}

// Line returns the file's line of row i.
func (t *Table) Line(i int) int { return t.lines[i] }

// ColumnNames returns the names of the columns in file order.
func (t *Table) ColumnNames() []string {
	out := make([]string, len(t.Columns))
	for i, c := range t.Columns {
		out[i] = c.Name
	}
	return out
}

// tableReader reads one CSV file and reports errors at its lines and
// columns, with the line shown under them.
type tableReader struct {
	path string
	data []byte
	errs syntax.ErrorList
}

func (r *tableReader) errorAt(line, col int, format string, args ...any) {
	// encoding/csv reads the file without its byte-order mark.
	src := strings.TrimPrefix(lineText(r.data, line), "\ufeff")
	// encoding/csv counts columns in bytes; a caret counts characters. A
	// column past the end of the line (a quote left open) is its end.
	col = min(col, len(src)+1)
	if col > 0 {
		col = utf8.RuneCountInString(src[:col-1]) + 1
	}
	r.errs = append(r.errs, &syntax.Error{Pos: syntax.Position{Filename: r.path, Line: line, Column: col},
		Msg: fmt.Sprintf(format, args...), Source: src})
}

// lineText returns line n (from 1) of data, without its line end.
func lineText(data []byte, n int) string {
	for i := 1; i < n; i++ {
		j := bytes.IndexByte(data, '\n')
		if j < 0 {
			return ""
		}
		data = data[j+1:]
	}
	if j := bytes.IndexByte(data, '\n'); j >= 0 {
		data = data[:j]
	}
	return strings.TrimSuffix(string(data), "\r")
}

// maxTableErrors is how many errors reading a table reports before it
// stops.
const maxTableErrors = 10

// ReadTable reads data, the bytes of the CSV file written as path, as the
// table name. key names the key column ("" for the first). The file is
// UTF-8 with or without a byte-order mark, with LF or CRLF line ends, and
// values in double quotes may hold commas, quotes (doubled) and line
// breaks. A column whose header carries a unit holds numbers; a column
// without one holds numbers when every value is one, and text otherwise.
// A number may have thousands separators (1,234.5, in quotes in the file),
// a sign and an exponent; a currency sign, a percent sign, a decimal comma
// or a number in parentheses is an error that says how to write it. Every
// error names the file, line and column, and shows the line.
func ReadTable(name, path string, data []byte, key string) (*Table, error) {
	r := &tableReader{path: path, data: data}
	t, err := r.read(name, key)
	if err != nil {
		return nil, err
	}
	if len(r.errs) > 0 {
		return nil, r.errs
	}
	return t, nil
}

// errKey is the error of a key column the header does not have; the caller
// places it at the key's name in the model.
type errKey struct{ key, hint string }

func (e *errKey) Error() string { return "no column " + e.key + " for the key" + e.hint }

// errFile is an error of a whole file (empty, not UTF-8 text), which has
// no line to show; the caller places it at the file's name in the model.
type errFile struct{ path, msg string }

func (e *errFile) Error() string { return e.path + ": " + e.msg }

func (r *tableReader) read(name, key string) (*Table, error) {
	data := r.data
	switch {
	case bytes.HasPrefix(data, []byte{0xFE, 0xFF}), bytes.HasPrefix(data, []byte{0xFF, 0xFE}):
		return nil, &errFile{r.path, "the file is UTF-16 text: save it as UTF-8 (CSV UTF-8)"}
	case bytes.IndexByte(data[:min(len(data), 4096)], 0) >= 0:
		return nil, &errFile{r.path, "the file is not text (it holds NUL bytes): is it a spreadsheet rather than a CSV file?"}
	case len(bytes.TrimSpace(bytes.TrimPrefix(data, []byte{0xEF, 0xBB, 0xBF}))) == 0:
		return nil, &errFile{r.path, "the file is empty: a table needs a header line and at least one row"}
	}
	data = bytes.TrimPrefix(data, []byte{0xEF, 0xBB, 0xBF})
	cr := csv.NewReader(bytes.NewReader(data))
	cr.ReuseRecord = true
	head, err := cr.Read()
	if err != nil {
		r.csvError(err, len(head))
		return nil, r.errs
	}
	t := &Table{Name: name, Path: r.path, col: map[string]int{}}
	keyCol := 0
	for i, h := range head {
		_, col := cr.FieldPos(i)
		c := r.header(h, 1, col)
		if c == nil {
			continue
		}
		if j, dup := t.col[c.Name]; dup {
			r.errorAt(1, col, "column %s appears twice (columns %d and %d)", c.Name, j+1, i+1)
			continue
		}
		t.col[c.Name] = i
		t.Columns = append(t.Columns, c)
		if key != "" && c.Name == key {
			keyCol = i
		}
	}
	if len(r.errs) > 0 {
		return nil, r.errs
	}
	if key != "" && t.Columns[keyCol].Name != key {
		return nil, &errKey{key, syntax.DidYouMean(key, t.ColumnNames())}
	}
	kc := t.Columns[keyCol]
	if kc.Unit != "" {
		r.errorAt(1, kc.column, "the key column %s has a unit: a key names a row; take the unit out of its header", kc.Name)
		return nil, r.errs
	}
	t.Key = kc.Name
	ncol := len(t.Columns)
	// Room for every row at once: a line is at least one row's end.
	rows := bytes.Count(data, []byte{'\n'}) + 1
	raw := make([][]string, ncol) // the text of the columns without a unit
	for i, c := range t.Columns {
		if c.Unit == "" {
			raw[i] = make([]string, 0, rows)
		} else {
			c.Num = make([]float64, 0, rows)
		}
	}
	t.keyRow = make(map[string]int, rows)
	t.Keys = make([]string, 0, rows)
	t.lines = make([]int, 0, rows)
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			if r.csvError(err, len(rec)) {
				continue
			}
			break
		}
		row := len(t.Keys)
		line, _ := cr.FieldPos(0)
		t.lines = append(t.lines, line)
		for i, v := range rec {
			c := t.Columns[i]
			if i == keyCol {
				k := strings.TrimSpace(v)
				_, col := cr.FieldPos(i)
				switch {
				case k == "":
					r.errorAt(line, col, "row %d has no key: every row needs a value in %s", row+1, c.Name)
				case strings.ContainsAny(k, "[]\n"):
					r.errorAt(line, col, "the key %q holds a bracket or a line break, which an element's name cannot: %s[KEY]", k, c.Name)
				}
				if first, dup := t.keyRow[k]; dup && k != "" {
					r.errorAt(line, col, "duplicate key %s: rows %d (line %d) and %d have it; a key names one row", k, first+1, t.lines[first], row+1)
				}
				t.keyRow[k] = row
				t.Keys = append(t.Keys, k)
				raw[i] = append(raw[i], k)
				continue
			}
			if c.Unit == "" {
				raw[i] = append(raw[i], v)
				continue
			}
			x, msg := parseCell(v)
			if msg != "" {
				_, col := cr.FieldPos(i)
				r.errorAt(line, col, "column %s, row %s: %s", c.Name, t.Keys[row], msg)
			}
			c.Num = append(c.Num, x)
		}
		if len(r.errs) >= maxTableErrors {
			break
		}
	}
	if len(r.errs) > 0 {
		return nil, r.errs
	}
	if len(t.Keys) == 0 {
		r.errorAt(1, 1, "the table has a header but no rows")
		return nil, r.errs
	}
	for i, c := range t.Columns {
		if raw[i] == nil {
			continue
		}
		c.Text = raw[i]
		if i == keyCol {
			continue
		}
		c.Num = make([]float64, len(c.Text))
		for row, v := range c.Text {
			x, msg := parseCell(v)
			if msg != "" {
				c.Num, c.notNum, c.notNumVal = nil, row, strings.TrimSpace(v)
				break
			}
			c.Num[row] = x
		}
		if c.Num != nil {
			c.Text = nil
		}
	}
	return t, nil
}

// csvError reports an error of encoding/csv and says whether reading can
// go on.
func (r *tableReader) csvError(err error, fields int) (goOn bool) {
	var pe *csv.ParseError
	if !errors.As(err, &pe) {
		r.errorAt(1, 1, "%v", err)
		return false
	}
	switch {
	case errors.Is(pe.Err, csv.ErrFieldCount):
		want := 0
		if hdr := lineText(r.data, 1); hdr != "" {
			if h, err := csv.NewReader(strings.NewReader(strings.TrimPrefix(hdr, "\ufeff"))).Read(); err == nil {
				want = len(h)
			}
		}
		r.errorAt(pe.Line, 1, "this row has %d values, the header %d (a value with a comma must be in double quotes: \"1,200\")", fields, want)
		return len(r.errs) < maxTableErrors
	case errors.Is(pe.Err, csv.ErrBareQuote):
		r.errorAt(pe.Line, pe.Column, "a quote inside a value without quotes: put the whole value in double quotes and double the quote inside (\"12\"\" pipe\")")
	case errors.Is(pe.Err, csv.ErrQuote):
		r.errorAt(pe.Line, pe.Column, "a quoted value is not closed, or has text after its closing quote (started on line %d)", pe.StartLine)
	default:
		r.errorAt(pe.Line, pe.Column, "%v", pe.Err)
	}
	return false
}

// header reads the header cell h at the given line and column: a name and
// an optional unit in brackets.
func (r *tableReader) header(h string, line, col int) *Column {
	c := &Column{Header: h, line: line, column: col, u: unit.One()}
	text := strings.TrimSpace(h)
	if i := strings.IndexByte(text, '['); i >= 0 {
		j := strings.LastIndexByte(text, ']')
		if j < i || strings.TrimSpace(text[j+1:]) != "" {
			r.errorAt(line, col, "column header %q: a unit goes in brackets at the end: mass [kg]", h)
			return nil
		}
		c.Unit = strings.TrimSpace(text[i+1 : j])
		u, err := unit.Parse(c.Unit)
		if err != nil {
			r.errorAt(line, col, "column header %q: %v", h, err)
			return nil
		}
		c.u = u
		text = strings.TrimSpace(text[:i])
	}
	name := strings.Map(func(r rune) rune {
		if r == ' ' || r == '-' || r == '.' {
			return '_'
		}
		return r
	}, text)
	for k, ch := range name {
		if !(ch == '_' || unicode.IsLetter(ch) || k > 0 && unicode.IsDigit(ch)) {
			r.errorAt(line, col, "column header %q is not a name: use letters, digits and _, starting with a letter", h)
			return nil
		}
	}
	if name == "" {
		r.errorAt(line, col, "a column has no name in the header")
		return nil
	}
	c.Name = name
	return c
}

// parseCell reads a number from a cell: an optional sign, digits with
// optional thousands separators (1,234,567.5), a decimal point and an
// exponent. It returns a message saying how to write the cell when it is
// not such a number.
func parseCell(v string) (float64, string) {
	if x, ok := shortDecimal(v); ok {
		return x, ""
	}
	if plainNumber(v) {
		if x, err := strconv.ParseFloat(v, 64); err == nil {
			return x, ""
		}
	}
	s := strings.TrimSpace(v)
	if s == "" {
		return 0, "the value is empty: write a number (0 if it is nothing)"
	}
	body := strings.TrimLeft(s, "+-")
	if len(s)-len(body) > 1 {
		return 0, fmt.Sprintf("%q is not a number", s)
	}
	switch {
	case strings.HasPrefix(body, "(") && strings.HasSuffix(body, ")"):
		return 0, fmt.Sprintf("%q: write a negative number with a minus sign (-%s)", s, strings.Trim(body, "()"))
	case strings.ContainsAny(body, "$€£¥"):
		return 0, fmt.Sprintf("%q: a currency sign is not part of a number; put the unit in the header: price [$]", s)
	case strings.HasSuffix(body, "%"):
		return 0, fmt.Sprintf("%q: a percent sign is not part of a number; put the unit in the header (rate [%%]) and write %s", s, strings.TrimSuffix(body, "%"))
	}
	if strings.ContainsRune(body, ',') {
		mant, rest := body, ""
		if i := strings.IndexAny(body, ".eE"); i >= 0 {
			mant, rest = body[:i], body[i:]
		}
		groups := strings.Split(mant, ",")
		ok := len(groups[0]) >= 1 && len(groups[0]) <= 3 && !strings.Contains(rest, ",")
		for _, g := range groups[1:] {
			ok = ok && len(g) == 3
		}
		if !ok {
			return 0, fmt.Sprintf("%q is not a number: a comma is read only as a thousands separator (1,234.5); write a decimal with a point (12.5)", s)
		}
		body = strings.Join(groups, "") + rest
	}
	if body == "" || !(body[0] >= '0' && body[0] <= '9' || body[0] == '.') || strings.ContainsAny(body, "_xXpPnNiI") {
		return 0, fmt.Sprintf("%q is not a number", s)
	}
	x, err := strconv.ParseFloat(body, 64)
	if err != nil {
		if errors.Is(err, strconv.ErrRange) {
			return 0, fmt.Sprintf("%q is too large", s)
		}
		return 0, fmt.Sprintf("%q is not a number", s)
	}
	if s[0] == '-' {
		x = -x
	}
	return x, ""
}

// pow10 holds the powers of ten that are exact in a float64.
var pow10 = [...]float64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15}

// shortDecimal reads the common cell quickly: an optional minus sign and at
// most 15 digits with at most one decimal point, such as 1250, -0.016 or
// 12.25. The digits make an integer m below 2^53 and the point a power of
// ten p = 10^k with k <= 15, both exact in a float64, so m/p is the
// correctly rounded value, as strconv.ParseFloat gives it (the fast path
// of W. D. Clinger, "How to read floating point numbers accurately",
// PLDI 1990). Anything else is left to strconv.
func shortDecimal(s string) (float64, bool) {
	neg := false
	if s != "" && s[0] == '-' {
		neg, s = true, s[1:]
	}
	if s == "" || len(s) > 16 {
		return 0, false
	}
	var m uint64
	digits, frac := 0, -1
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c >= '0' && c <= '9':
			m = m*10 + uint64(c-'0')
			digits++
		case c == '.' && frac < 0:
			frac = i
		default:
			return 0, false
		}
	}
	if digits == 0 || digits > 15 {
		return 0, false
	}
	x := float64(m)
	if frac >= 0 {
		x /= pow10[len(s)-1-frac]
	}
	if neg {
		x = -x
	}
	return x, true
}

// plainNumber reports whether s is made of the characters of a decimal
// number only (digits, a point, a sign, an exponent), starting with a
// digit, a point or a sign: the common cell, which strconv.ParseFloat reads
// as it is.
func plainNumber(s string) bool {
	if s == "" {
		return false
	}
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c >= '0' && c <= '9', c == '.':
		case c == '-' || c == '+' || c == 'e' || c == 'E':
			if i == 0 && (c == 'e' || c == 'E') {
				return false
			}
		default:
			return false
		}
	}
	return true
}

// resolvePath returns the file a table statement names: as written when
// absolute, else relative to dir (the model file's or the notebook's
// directory; "" is the working directory).
func resolvePath(dir, path string) string {
	if filepath.IsAbs(path) || dir == "" {
		return path
	}
	return filepath.Join(dir, path)
}

// readTableFile reads the file of a table statement, with an error at the
// statement's file name when it cannot.
func readTableFile(f *syntax.File, s *syntax.TableStmt, dir string) ([]byte, error) {
	full := resolvePath(dir, s.Path.Value)
	data, err := readRegular(full, MaxTableBytes)
	if err == nil {
		return data, nil
	}
	var errs syntax.ErrorList
	var te *tableFileError
	if errors.As(err, &te) {
		errs.Add(f, s.Path.Pos(), "cannot read "+s.Path.Value+": "+te.msg)
		return nil, errs
	}
	where := ""
	if abs, aerr := filepath.Abs(full); aerr == nil && abs != s.Path.Value {
		where = " (looked for " + abs + ")"
	}
	var msg string
	switch {
	case errors.Is(err, os.ErrNotExist):
		msg = "no file " + s.Path.Value + where
	case errors.Is(err, os.ErrPermission):
		msg = "cannot read " + s.Path.Value + ": permission denied" + where
	default:
		var pe *os.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		msg = "cannot read " + s.Path.Value + ": " + err.Error() + where
	}
	errs.Add(f, s.Path.Pos(), msg)
	return nil, errs
}

// MaxTableBytes is the largest file a table statement reads: 512 MiB,
// several million lines. A file that is not a regular file (a device such
// as /dev/zero, a pipe) is refused: it could send bytes without end, or
// none.
const MaxTableBytes = 512 << 20

// tableFileError is a file a table statement will not read.
type tableFileError struct{ msg string }

func (e *tableFileError) Error() string { return e.msg }

// readRegular reads the regular file path of at most max bytes.
func readRegular(path string, max int64) ([]byte, error) {
	fh, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer fh.Close()
	st, err := fh.Stat()
	if err != nil {
		return nil, err
	}
	switch {
	case st.IsDir():
		return nil, &tableFileError{"it is a directory, not a file"}
	case !st.Mode().IsRegular():
		return nil, &tableFileError{"it is not a regular file (a device or a pipe)"}
	case st.Size() > max:
		return nil, &tableFileError{fmt.Sprintf("the file is %s bytes, more than the %s a table reads", unit.Format(float64(st.Size()), ""), unit.Format(float64(max), ""))}
	}
	data, err := io.ReadAll(io.LimitReader(fh, max+1))
	if err == nil && int64(len(data)) > max {
		return nil, &tableFileError{fmt.Sprintf("the file grew past the %s bytes a table reads", unit.Format(float64(max), ""))}
	}
	return data, err
}

// TableResult is the result of loading a table: its size and its columns.
type TableResult struct {
	Kind     string        `json:"kind"` // "table"
	Name     string        `json:"name"`
	Path     string        `json:"path"`
	Rows     int           `json:"rows"`
	Key      string        `json:"key"`
	Columns  []TableColumn `json:"columns"`
	Replaced bool          `json:"replaced"`
	// SHA256 is the hex SHA-256 of the file's bytes as read, so a report
	// can say which data its numbers came from.
	SHA256 string `json:"sha256"`
}

// maxDistinct is how many distinct values of a text column a table's
// description counts; one more means "more than that".
const maxDistinct = 1000

// TableColumn describes a column: numbers (with their unit, least and
// greatest value) or text (with the number of distinct values, up to
// maxDistinct + 1 meaning more than maxDistinct).
type TableColumn struct {
	Name     string  `json:"name"`
	Type     string  `json:"type"` // "number" or "text"
	Unit     string  `json:"unit,omitempty"`
	Min      float64 `json:"min,omitempty"`
	Max      float64 `json:"max,omitempty"`
	Distinct int     `json:"distinct,omitempty"`
}

// DefineTable reads the file of the table statement s from file f, the
// path relative to dir (the model file's or the notebook's directory; ""
// for the working directory), and declares the table, replacing a
// declaration of its name. A table that cannot be read changes nothing.
func (m *Model) DefineTable(f *syntax.File, s *syntax.TableStmt, dir string) (*TableResult, error) {
	data, err := readTableFile(f, s, dir)
	if err != nil {
		return nil, err
	}
	return m.DefineTableData(f, s, data)
}

// DefineTableData declares the table of statement s from data, the bytes
// of its CSV file.
func (m *Model) DefineTableData(f *syntax.File, s *syntax.TableStmt, data []byte) (*TableResult, error) {
	key := ""
	if s.Key != nil {
		key = s.Key.Name
	}
	t, err := ReadTable(s.Name.Name, s.Path.Value, data, key)
	var ek *errKey
	var ef *errFile
	var errs syntax.ErrorList
	switch {
	case errors.As(err, &ek):
		errs.Add(f, s.Key.Pos(), fmt.Sprintf("%s has no column %s for the key%s", s.Path.Value, ek.key, ek.hint))
		return nil, errs
	case errors.As(err, &ef):
		errs.Add(f, s.Path.Pos(), ef.Error())
		return nil, errs
	}
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(data)
	res := &TableResult{Kind: "table", Name: t.Name, Path: t.Path, Rows: len(t.Keys), Key: t.Key, SHA256: hex.EncodeToString(sum[:])}
	for _, c := range t.Columns {
		tc := TableColumn{Name: c.Name, Unit: c.Unit, Type: "number"}
		if c.IsText() {
			tc.Type = "text"
			seen := map[string]bool{}
			for _, v := range c.Text {
				if seen[v] = true; len(seen) > maxDistinct {
					break
				}
			}
			tc.Distinct = len(seen)
		} else {
			tc.Min, tc.Max = c.Num[0], c.Num[0]
			for _, v := range c.Num {
				tc.Min, tc.Max = min(tc.Min, v), max(tc.Max, v)
			}
		}
		res.Columns = append(res.Columns, tc)
	}
	res.Replaced = m.define(&Decl{Name: t.Name, File: f, Table: t, TableStmt: s})
	return res, nil
}
