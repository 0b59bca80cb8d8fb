package syntax

import "testing"

const lineItemModel = `table parts = "bid lines.csv" key item
table rates = "rates.csv"
periods year = 1..25
input qty = parts.qty (±10%)
input price = parts.unit_price (parts.price_low..parts.price_high)
input hours = parts.hours ~ triangular(parts.h_low, parts.hours, parts.h_high)
input om[year] = 120000 [$] (±15%)
input table = 3
cost = qty * price
bolts = where(cost, parts.category == "fasteners")
one = qty[bracket-12] * 2 + om[ 3 ]
scenario lean: qty[bracket-12] = 40, om[3] = 1000
sweep total over price[weld 7] 1..2
`

func TestParseLineItems(t *testing.T) {
	f, stmts, err := Parse("m", []byte(lineItemModel))
	if err != nil {
		t.Fatal(err)
	}
	tb := stmts[0].(*TableStmt)
	if tb.Name.Name != "parts" || tb.Path.Value != "bid lines.csv" || tb.Path.Lit != `"bid lines.csv"` || tb.Key.Name != "item" {
		t.Errorf("table: %+v %+v %+v", tb.Name, tb.Path, tb.Key)
	}
	if tb2 := stmts[1].(*TableStmt); tb2.Key != nil {
		t.Errorf("table without key: %+v", tb2.Key)
	}
	if p := stmts[2].(*PeriodsStmt); p.Name.Name != "year" || String(p.First) != "1" || String(p.Last) != "25" {
		t.Errorf("periods: %+v", p)
	}
	qty := stmts[3].(*InputStmt)
	if String(qty.Value) != "parts.qty" || qty.Range == nil || !qty.Range.Symmetric || qty.Over != nil {
		t.Errorf("qty = %s %+v", String(qty.Value), qty.Range)
	}
	price := stmts[4].(*InputStmt)
	if price.Range.Low.Column.Name != "parts.price_low" || price.Range.High.Column.Name != "parts.price_high" {
		t.Errorf("price range %+v", price.Range)
	}
	hours := stmts[5].(*InputStmt)
	if hours.Dist == nil || len(hours.Dist.Args) != 3 || String(hours.Dist.Args[0]) != "parts.h_low" {
		t.Errorf("hours dist %+v", hours.Dist)
	}
	om := stmts[6].(*InputStmt)
	if om.Over == nil || om.Over.Name != "year" || om.Unit.Text != "$" || f.Position(om.Over.Pos()).Column != 10 {
		t.Errorf("om over %+v unit %+v", om.Over, om.Unit)
	}
	if in := stmts[7].(*InputStmt); in.Name.Name != "table" {
		t.Errorf("an input named table: %+v", in.Name)
	}
	bolts := stmts[9].(*FormulaStmt)
	call := bolts.Value.(*CallExpr)
	cmp := call.Args[1].(*BinaryExpr)
	if s, ok := cmp.Y.(*StringLit); !ok || s.Value != "fasteners" || String(bolts.Value) != `where(cost, parts.category == "fasteners")` {
		t.Errorf("bolts = %s", String(bolts.Value))
	}
	one := stmts[10].(*FormulaStmt)
	sum := one.Value.(*BinaryExpr)
	el := sum.X.(*BinaryExpr).X.(*Ident)
	el2 := sum.Y.(*Ident)
	if el.Name != "qty[bracket-12]" || el2.Name != "om[3]" || f.Position(el2.End()).Column != len("one = qty[bracket-12] * 2 + om[ 3 ]")+1 {
		t.Errorf("elements %q %q (end %v)", el.Name, el2.Name, f.Position(el2.End()))
	}
	sc := stmts[11].(*CommandStmt)
	if sc.Assigns[0].Name.Name != "qty[bracket-12]" || sc.Assigns[1].Name.Name != "om[3]" {
		t.Errorf("scenario names %q %q", sc.Assigns[0].Name.Name, sc.Assigns[1].Name.Name)
	}
	if sw := stmts[12].(*CommandStmt); sw.Axes[0].Name.Name != "price[weld 7]" {
		t.Errorf("sweep axis %q", sw.Axes[0].Name.Name)
	}
}

// A unit after a name with a space is still the line's unit, and a call
// with a space before its parenthesis is still a call outside an input.
func TestParseLineItemsKeepsUnits(t *testing.T) {
	_, stmts, err := Parse("m", []byte("total = units * price [$]\nr = sqrt (4)\n"))
	if err != nil {
		t.Fatal(err)
	}
	if f := stmts[0].(*FormulaStmt); f.Unit == nil || f.Unit.Text != "$" || String(f.Value) != "units * price" {
		t.Errorf("total = %s [%v]", String(f.Value), f.Unit)
	}
	if _, ok := stmts[1].(*FormulaStmt).Value.(*CallExpr); !ok {
		t.Error("sqrt (4) is not a call")
	}
}
