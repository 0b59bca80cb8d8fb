package sens

import (
	"bytes"
	"encoding/csv"
	"errors"
	"strconv"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// A table with a byte-order mark, CRLF line ends, quoted fields holding
// commas, doubled quotes and a line break, thousands separators, blanks
// around numbers, a column without a unit that holds numbers and one that
// holds text, and a numeric-looking key: every cell against encoding/csv's
// own reading of the same bytes.
func TestReadTableAgainstCSV(t *testing.T) {
	src := "\ufeffitem,note,qty,price [$/kg],mass [t]\r\n" +
		"007,\"bolts, \"\"M12\"\"\",12,\"1,234.5\", 0.25 \r\n" +
		"008,\"two\r\nlines\",-3,2e3,1.5\r\n" +
		"010,plain, +4 ,\"12,345,678\",.5\r\n"
	tb, err := ReadTable("t", "t.csv", []byte(src), "")
	if err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(strings.NewReader(strings.TrimPrefix(src, "\ufeff"))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if tb.Key != "item" || strings.Join(tb.ColumnNames(), ",") != "item,note,qty,price,mass" {
		t.Fatalf("key %s, columns %v", tb.Key, tb.ColumnNames())
	}
	for i, r := range recs[1:] {
		if tb.Keys[i] != r[0] {
			t.Errorf("row %d key %q, want %q", i, tb.Keys[i], r[0])
		}
		if got := tb.Column("note").Text[i]; got != strings.TrimSpace(r[1]) {
			t.Errorf("row %d note %q, want %q", i, got, r[1])
		}
		for j, name := range []string{"qty", "price", "mass"} {
			want, err := strconv.ParseFloat(strings.ReplaceAll(strings.TrimSpace(r[2+j]), ",", ""), 64)
			if err != nil {
				t.Fatal(err)
			}
			if got := tb.Column(name).Num[i]; got != want {
				t.Errorf("row %d %s = %v, want %v", i, name, got, want)
			}
		}
	}
	if c := tb.Column("price"); c.Unit != "$/kg" || c.IsText() || !tb.Column("note").IsText() || tb.Column("qty").IsText() {
		t.Errorf("column kinds: price %q text %v, note text %v, qty text %v", c.Unit, c.IsText(), tb.Column("note").IsText(), tb.Column("qty").IsText())
	}
	if tb.Line(1) != 3 || tb.Line(2) != 5 {
		t.Errorf("lines %d and %d, want 3 and 5", tb.Line(1), tb.Line(2))
	}
	// The invented bid of the demo reads the same both ways.
	data := tapebench.BidCSV(tapebench.BidDemoLines, 1)
	bid, err := ReadTable("bid", "bid.csv", data, "item")
	if err != nil {
		t.Fatal(err)
	}
	for i, l := range readBid(t, data) {
		if bid.Keys[i] != l.item || bid.Column("qty").Num[i] != l.qty || bid.Column("category").Text[i] != l.cat || bid.Column("mass").Num[i] != l.mass {
			t.Fatalf("bid row %d: %s %v %s", i, bid.Keys[i], bid.Column("qty").Num[i], bid.Column("category").Text[i])
		}
	}
}

func TestParseCell(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want float64
		msg  string
	}{
		{"12", 12, ""}, {" -3.5 ", -3.5, ""}, {"+4", 4, ""}, {"1e3", 1000, ""}, {".5", 0.5, ""},
		{"1,234", 1234, ""}, {"-1,234,567.25", -1234567.25, ""}, {"12,345e2", 1234500, ""},
		{"", 0, "the value is empty"},
		{"12,5", 0, "a comma is read only as a thousands separator"},
		{"1,23,456", 0, "a comma is read only as a thousands separator"},
		{"$12", 0, "a currency sign is not part of a number"},
		{"12 €", 0, "a currency sign is not part of a number"},
		{"15%", 0, "put the unit in the header (rate [%]) and write 15"},
		{"(1,200)", 0, "write a negative number with a minus sign (-1,200)"},
		{"inf", 0, `"inf" is not a number`},
		{"NaN", 0, `"NaN" is not a number`},
		{"0x10", 0, `"0x10" is not a number`},
		{"1_000", 0, `"1_000" is not a number`},
		{"--1", 0, `"--1" is not a number`},
		{"1e999", 0, "is too large"},
		{"12 34", 0, `"12 34" is not a number`},
	} {
		got, msg := parseCell(tc.in)
		if tc.msg == "" && (msg != "" || got != tc.want) || tc.msg != "" && !strings.Contains(msg, tc.msg) {
			t.Errorf("parseCell(%q) = %v, %q; want %v, %q", tc.in, got, msg, tc.want, tc.msg)
		}
	}
}

// Every error names the file, line and column, and shows the line.
func TestReadTableErrors(t *testing.T) {
	for _, tc := range []struct {
		name, src string
		line, col int
		msg       string
	}{
		{"bad number", "k,q [kg]\na,1\nb,x1\n", 3, 3, `column q, row b: "x1" is not a number`},
		{"bad number after a multibyte key", "k,q [kg]\nä,1\nöö,x1\n", 3, 4, `"x1" is not a number`},
		{"duplicate key", "k,q\na,1\nb,2\na,3\n", 4, 1, "duplicate key a: rows 1 (line 2) and 3 have it"},
		{"empty key", "k,q\na,1\n ,2\n", 3, 1, "row 2 has no key"},
		{"key with a bracket", "k,q\na[1],1\n", 2, 1, "holds a bracket"},
		{"ragged", "k,q\na,1\nb,2,3\n", 3, 1, "this row has 3 values, the header 2"},
		{"bare quote", "k,q\na,1\"2\n", 2, 4, "a quote inside a value without quotes"},
		{"open quote", "k,q\na,\"12\n", 2, 6, "a quoted value is not closed"},
		{"bad unit", "k,q [furlong]\na,1\n", 1, 3, `column header "q [furlong]"`},
		{"unit not at the end", "k,q [kg] x\na,1\n", 1, 3, "a unit goes in brackets at the end"},
		{"header not a name", "k,q%\na,1\n", 1, 3, "is not a name"},
		{"empty header", "k,\na,1\n", 1, 3, "a column has no name"},
		{"duplicate column", "k,q,q\na,1,2\n", 1, 5, "column q appears twice"},
		{"unit on the key", "k [kg],q\na,1\n", 1, 1, "the key column k has a unit"},
		{"no rows", "k,q\n", 1, 1, "the table has a header but no rows"},
		{"after a byte-order mark", "\ufeffk,q [kg]\na,b\n", 2, 3, `"b" is not a number`},
		{"header after a byte-order mark", "\ufeffk,q [kgg]\na,1\n", 1, 3, `column header "q [kgg]"`},
	} {
		_, err := ReadTable("t", "t.csv", []byte(tc.src), "")
		var el syntax.ErrorList
		if !errors.As(err, &el) {
			t.Errorf("%s: error %v", tc.name, err)
			continue
		}
		e := el[0]
		if e.Pos.Filename != "t.csv" || e.Pos.Line != tc.line || e.Pos.Column != tc.col || !strings.Contains(e.Msg, tc.msg) || e.Caret() == "" {
			t.Errorf("%s: %v (line %q), want %d:%d %q", tc.name, e, e.Source, tc.line, tc.col, tc.msg)
		}
	}
	// Whole-file problems and an unknown key column are placed by the
	// caller, at the model's statement.
	for _, tc := range []struct{ src, msg string }{
		{"", "the file is empty"},
		{"\ufeff \r\n", "the file is empty"},
		{"\xff\xfek\x00", "UTF-16"},
		{"k,q\x00\n", "not text"},
	} {
		_, err := ReadTable("t", "t.csv", []byte(tc.src), "")
		var ef *errFile
		if !errors.As(err, &ef) || !strings.Contains(ef.msg, tc.msg) {
			t.Errorf("%q: %v, want %q", tc.src, err, tc.msg)
		}
	}
	_, err := ReadTable("t", "t.csv", []byte("item,q\na,1\n"), "itme")
	var ek *errKey
	if !errors.As(err, &ek) || ek.hint != " (did you mean item?)" {
		t.Errorf("unknown key: %v", err)
	}
	// A bad table stops after ten errors.
	var b bytes.Buffer
	b.WriteString("k,q [kg]\n")
	for i := range 50 {
		b.WriteString("r" + strconv.Itoa(i) + ",x\n")
	}
	var el syntax.ErrorList
	if _, err := ReadTable("t", "t.csv", b.Bytes(), ""); !errors.As(err, &el) || len(el) != maxTableErrors {
		t.Errorf("50 bad rows: %d errors, want %d", len(el), maxTableErrors)
	}
}

// A failed load changes nothing: the model keeps the table it had.
func TestDefineTableFailureChangesNothing(t *testing.T) {
	m := NewModel()
	f, stmts, err := syntax.Parse("m", []byte(`table t = "t.csv"`+"\ninput q = t.q\nx = sum(q)\n"))
	if err != nil {
		t.Fatal(err)
	}
	ts := stmts[0].(*syntax.TableStmt)
	if _, err := m.DefineTableData(f, ts, []byte("k,q [kg]\na,1\nb,2\n")); err != nil {
		t.Fatal(err)
	}
	m.Define(f, stmts[1])
	m.Define(f, stmts[2])
	if _, err := m.DefineTableData(f, ts, []byte("k,q [kg]\na,1\nb,oops\n")); err == nil {
		t.Fatal("a bad table loaded")
	}
	p, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	if v, err := p.Value("x"); err != nil || v.Value != 3 {
		t.Errorf("x = %v (%v), want 3 from the table loaded first", v, err)
	}
}

// FuzzReadTable reads any bytes as a table: an error or a table, never a
// panic; every error has a position and a message.
func FuzzReadTable(f *testing.F) {
	for _, s := range []string{
		"k,q [kg]\na,1\n", "\ufeffk,q\r\na,\"1,2\"\r\n", "k,q\na,1\"2\n", "k,\"q\n", "k [kg]\n", "\xff\xfe", "",
		string(tapebench.BidCSV(12, 3)), "k,q,r\na,1\nb,2,3,4\n", "k,q [m/s^]\na,1\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		tb, err := ReadTable("t", "t.csv", data, "")
		if err != nil {
			var el syntax.ErrorList
			var ef *errFile
			switch {
			case errors.As(err, &el):
				for _, e := range el {
					if e.Msg == "" || e.Pos.Line < 1 || e.Pos.Column < 1 {
						t.Fatalf("error without a position or a message: %+v", e)
					}
				}
			case errors.As(err, &ef):
			default:
				t.Fatalf("error of type %T: %v", err, err)
			}
			return
		}
		if len(tb.Keys) == 0 || len(tb.Columns) == 0 {
			t.Fatalf("a table with %d rows and %d columns", len(tb.Keys), len(tb.Columns))
		}
		for _, c := range tb.Columns {
			if n := max(len(c.Num), len(c.Text)); n != len(tb.Keys) {
				t.Fatalf("column %s has %d values for %d rows", c.Name, n, len(tb.Keys))
			}
		}
	})
}

// The quick reading of short decimals gives strconv.ParseFloat's value to
// the bit.
func TestShortDecimal(t *testing.T) {
	cases := []string{"0", "1250", "-0.016", "12.25", "0.1", "0.3", "123456789012345", "1.00000000000001", "99999.9999999999", "-7.", ".5", "3.14159265358979"}
	for i := range 2000 {
		cases = append(cases, strconv.FormatFloat(float64(i)*0.37-100, 'f', i%7, 64))
	}
	for _, s := range cases {
		want, err := strconv.ParseFloat(s, 64)
		got, ok := shortDecimal(s)
		if !ok || err != nil || got != want {
			t.Errorf("shortDecimal(%q) = %v %v, ParseFloat %v %v", s, got, ok, want, err)
		}
	}
	for _, s := range []string{"", "-", ".", "1e3", "1.2.3", "1234567890123456", "1,2", "+1", " 1"} {
		if _, ok := shortDecimal(s); ok {
			t.Errorf("shortDecimal(%q) took it", s)
		}
	}
}
