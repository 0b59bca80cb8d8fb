package render

import (
	"strconv"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens"
)

func TestVectorShowsFirstRowsAndTotal(t *testing.T) {
	v := &sens.VectorResult{Kind: "vector", Name: "cost", Unit: "$", Over: "bid", Noun: "row"}
	for i := range 25 {
		v.Keys = append(v.Keys, "L-"+strconv.Itoa(i))
		v.Values = append(v.Values, 1000+float64(i))
		v.Total += 1000 + float64(i)
	}
	v.Count = len(v.Values)
	r := Vector(v, nil)
	lines := strings.Split(strings.TrimRight(r.Text(), "\n"), "\n")
	// heading, column heads, rule, 10 rows, "… 15 more", total
	if len(lines) != 15 || lines[0] != "cost: 25 rows over bid, total $25,300" || !strings.Contains(lines[13], "… 15 more") {
		t.Fatalf("text:\n%s", r.Text())
	}
	if f := strings.Fields(lines[14]); len(f) != 2 || f[0] != "total" || f[1] != "$25,300" {
		t.Errorf("total line %q", lines[14])
	}
	if f := strings.Fields(lines[3]); f[0] != "L-0" || f[1] != "$1,000" {
		t.Errorf("first row %q", lines[3])
	}
	if !strings.Contains(r.HTML(), "<caption>cost: 25 rows over bid, total $25,300</caption>") || strings.Contains(r.HTML(), "L-10") {
		t.Errorf("HTML: %s", r.HTML())
	}
	// A short vector shows every element.
	v.Keys, v.Values, v.Count = v.Keys[:3], v.Values[:3], 3
	if r := Vector(v, nil); strings.Contains(r.Text(), "more") || strings.Count(r.Text(), "\n") != 7 {
		t.Errorf("three rows:\n%s", r.Text())
	}
}

func TestTableAndSubtotals(t *testing.T) {
	r := Table(&sens.TableResult{Kind: "table", Name: "bid", Path: "bid.csv", Rows: 360, Key: "item", Columns: []sens.TableColumn{
		{Name: "item", Type: "text", Distinct: 360}, {Name: "category", Type: "text", Distinct: 7},
		{Name: "mass", Type: "number", Unit: "kg", Min: 0.02, Max: 1800},
	}}, nil)
	want := []string{"table bid loaded: 360 rows from bid.csv, keyed by item", "item      key", "category  text", "7 values", "mass      numbers [kg]", "0.02 kg .. 1,800 kg"}
	for _, w := range want {
		if !strings.Contains(r.Text(), w) {
			t.Errorf("table text lacks %q:\n%s", w, r.Text())
		}
	}
	d := &sens.DriversResult{Kind: "drivers", Output: "total", Value: 100, Unit: "$",
		Inputs: []sens.DriverInput{{Name: "qty[a]", Value: 2, Partial: 30, PartialUnit: "$", Elasticity: 0.6, Share: 0.5}}}
	d.Columns = []sens.DriverSubtotal{{Name: "qty", Count: 2, Elasticity: 1, Effect: 100, Share: 0.8}}
	d.GroupBy, d.Groups = "bid.category", []sens.DriverSubtotal{{Name: "plate", Count: 1, Elasticity: 0.6, Effect: 60, Share: 0.5}}
	d.Rest = &sens.DriverRest{Count: 1, MaxElasticity: 0.4, Elasticity: 0.4}
	text := Drivers(d, nil).Text()
	for _, w := range []string{"… and 1 more input, each with |elasticity| at most 0.4000, together +0.4000", "subtotals by vector input", "qty                     2       +1.0000", "subtotals by bid.category", "plate"} {
		if !strings.Contains(text, w) {
			t.Errorf("drivers text lacks %q:\n%s", w, text)
		}
	}
}
