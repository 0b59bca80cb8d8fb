package kernel

import (
	"context"
	"slices"
	"strings"
	"testing"
)

func TestCompleteContexts(t *testing.T) {
	h := NewHandler(New())
	if err := h.in.Execute(context.Background(), "", "input shop_rate = 60 [$/h]\ninput steel = 0.9 [$/kg]\ntotal = shop_rate * (2 [h])", &captureSink{}); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		code      string
		want      string // one expected match
		notWant   string
		wantStart int
	}{
		{"x = sho", "shop_rate", "", 4},                      // a model name
		{"x = sq", "sqrt", "", 4},                            // a function
		{"swe", "sweep", "", 0},                              // a command at the start of a line
		{"x = swe", "", "sweep", 4},                          // not a command mid-line
		{"input m = 2 [k", "kg", "", 13},                     // a unit inside brackets
		{"input m = 2 [$/k", "kg", "", 15},                   // after an operator in a unit
		{"input p = 1 ~ per", "pert", "", 14},                // a distribution after ~
		{"input new_rate = 3\nx = new_", "new_rate", "", 23}, // a name declared in the same cell
		{"sweep total over ste", "steel", "", 17},            // an input in a command
	} {
		c := h.Complete(tc.code, len(tc.code))
		if tc.want != "" && !slices.Contains(c.Matches, tc.want) {
			t.Errorf("%q: matches %v lack %q", tc.code, c.Matches, tc.want)
		}
		if tc.notWant != "" && slices.Contains(c.Matches, tc.notWant) {
			t.Errorf("%q: matches %v hold %q", tc.code, c.Matches, tc.notWant)
		}
		if c.Start != tc.wantStart || c.End != len(tc.code) {
			t.Errorf("%q: replaces [%d, %d), want [%d, %d)", tc.code, c.Start, c.End, tc.wantStart, len(tc.code))
		}
	}
}

func TestInspect(t *testing.T) {
	h := NewHandler(New())
	if err := h.in.Execute(context.Background(), "", "input rate = 60 [$/h] ~ normal(60, 5)\ninput t = 2 [h] (1..3)\ncost = rate * t", &captureSink{}); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		code   string
		cursor int
		want   []string
	}{
		{"cost", 2, []string{"cost = rate * t", "value: $120", "top drivers: rate (elasticity +1.0000), t (elasticity +1.0000)"}},
		// Ranges and distribution parameters carry the input's unit.
		{"rate", 4, []string{"input rate = 60 $/h", "distribution: normal(60 $/h, 5 $/h)", "(10th to 90th percentile of the distribution)"}},
		{"t", 1, []string{"range: 1 h .. 3 h (as declared)"}},
		// A unit in brackets, under the cursor anywhere in it: its
		// symbols, dimension and size (1 kWh = 3.6 MJ: SI Brochure, 9th
		// ed., table 8).
		{"input e = 2 [kWh]", 14, []string{"unit kWh: kilowatt hour; energy; 1 kWh = 3,600,000 J"}},
		{"input r = 2 [$/kWh]", 13, []string{"unit $/kWh: $ = currency $", "kWh = kilowatt hour"}},
		{"x = 3 [min] * t", 9, []string{"unit min: minute; time; 1 min = 60 s"}},
		// A unit symbol outside brackets that names nothing in the model.
		{"kWh", 1, []string{"unit kWh: kilowatt hour"}},
		{"x = recovery(0.1, 5)", 8, []string{"function recovery"}},
		{"input a = 1 ~ pert(1, 2, 3)", 16, []string{"distribution pert(low, mode, high)"}},
		{"tornado cost", 3, []string{"command tornado"}},
	} {
		b, found := h.Inspect(tc.code, tc.cursor, 0)
		if !found {
			t.Errorf("%q at %d: nothing found", tc.code, tc.cursor)
			continue
		}
		text := b.Data["text/plain"].(string)
		for _, w := range tc.want {
			if !strings.Contains(text, w) {
				t.Errorf("%q: %q lacks %q", tc.code, text, w)
			}
		}
	}
	if _, found := h.Inspect("nothing_here", 3, 0); found {
		t.Error("an unknown name was described")
	}
}

func TestIsComplete(t *testing.T) {
	h := NewHandler(New())
	for code, want := range map[string]string{
		"x = (1 +":        "incomplete",
		"x = max(1,\n 2)": "complete",
		"x = )":           "invalid",
		"":                "complete",
		"drivers total":   "complete",
		"input a = 1 \\":  "incomplete",
	} {
		if got, _ := h.IsComplete(code); got != want {
			t.Errorf("IsComplete(%q) = %s, want %s", code, got, want)
		}
	}
}

// Completion knows its place on the line: what the grammar lets stand there,
// and nothing else.
func TestCompleteByContext(t *testing.T) {
	h := NewHandler(New())
	model := "input rate = 60 [$/h] (50..70)\ninput hours = 1.5 [h]\ncost = rate * hours\nprice = cost * 1.2\nscenario lean: hours = 1.2\n"
	if err := h.in.Execute(context.Background(), "", model, &captureSink{}); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		code string
		want []string // every match, in order
	}{
		{"drivers ", []string{"cost", "price"}},                         // after a verb: outputs only
		{"tornado c", []string{"cost"}},                                 //
		{"charts ", []string{"png", "svg", "text"}},                     // charts: its modes
		{"sweep cost over ", []string{"hours", "rate"}},                 // after over: inputs only
		{"breakeven price = 100 over r", []string{"rate"}},              //
		{"sweep cost over rate 50..70 and ", []string{"hours", "rate"}}, // a second axis
		{"sweep cost ", []string{"over"}},                               // the word that comes next
		{"compare cost ", []string{"across"}},                           //
		{"compare cost across ", []string{"base", "lean"}},              // scenarios
		{"compare cost across base, ", []string{"base", "lean"}},        //
		{"attribute cost ", []string{"from"}},                           //
		{"attribute cost from ", []string{"base", "lean"}},              // scenarios at both ends
		{"attribute cost from base ", []string{"to"}},                   //
		{"attribute cost from base to l", []string{"lean"}},             //
		{"attribute cost from base to lean ", []string{"top="}},         //
		{"scenario high: ", []string{"hours", "rate"}},                  // inputs to set
		{"scenario high: rate = 65, h", []string{"hours"}},              //
		{"tornado cost ", []string{"top="}},                             // after the output: options
		{"spider cost (±20%) ", []string{"lines=", "points=", "top="}},  //
		{"sweep cost over rate 50..70 ", []string{"and", "limit=", "n=", "steps=", "target="}},
		{"sweep cost over rate 50..70 n=5 ", []string{"limit=", "steps=", "target="}}, // not given twice
		{"drivers cost top=3 ", []string{"group="}},                                   // the option left
		{"input w = 2 [kW", []string{"kW", "kWh"}},                                    // in brackets: units
		{"x = sqr", []string{"sqrt"}},                                                 // functions in expressions
		{"reset ", nil},
	} {
		c := h.Complete(tc.code, len(tc.code))
		if !slices.Equal(c.Matches, tc.want) {
			t.Errorf("%q: matches %q, want %q", tc.code, c.Matches, tc.want)
		}
	}
	// Inside an expression of a command, any name or function may stand.
	if c := h.Complete("drivers cost * r", 16); !slices.Contains(c.Matches, "rate") || !slices.Contains(c.Matches, "round") {
		t.Errorf("in an expression: %q", c.Matches)
	}
}
