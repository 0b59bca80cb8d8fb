package tapebench

import (
	"fmt"
	"math/rand/v2"
	"strconv"
	"strings"
)

// The line items of an invented bid: a small fabricated steel structure (a
// plant platform with stairs and a walkway), priced line by line. The demo
// notebook's table is BidCSV(BidDemoLines, 1); the line-item benchmarks
// read BidCSV(100_000, 2).

// BidDemoLines is the number of lines of the demo notebook's table.
const BidDemoLines = 360

// BidCategories are the categories of the bid's lines, with the prefix of
// their keys.
var BidCategories = []struct{ Name, Prefix string }{
	{"plate", "PL"}, {"beam", "BM"}, {"grating", "GR"}, {"fasteners", "FX"},
	{"welding", "WD"}, {"paint", "PT"}, {"erection", "ER"},
}

// BidHeader is the header line of BidCSV.
const BidHeader = "item,category,description,qty [each],mass [kg],buyout [$],hours [h],hours_low [h],hours_high [h],steel_factor,unit_cost [$]"

// BidCSV returns an invented bid of n lines as a CSV file: one line per
// item, with its category, a description, a quantity, a unit mass, a
// bought-out price, labour hours per unit with a low and high estimate,
// a factor on the market price of steel (fabrication scrap and grade),
// and the unit cost the last bid priced it at (steel at $1.35/kg and
// labour at $95/h, give or take 10%). Descriptions hold commas and quotes (in double quotes), and
// some quantities are written with thousands separators, as a
// spreadsheet exports them. The same n and seed give the same file.
func BidCSV(n int, seed uint64) []byte {
	rng := rand.New(rand.NewPCG(seed, 1))
	var b strings.Builder
	b.Grow(n * 96)
	b.WriteString(BidHeader)
	b.WriteString("\r\n")
	count := make([]int, len(BidCategories))
	for i := range n {
		c := i % len(BidCategories)
		if i >= len(BidCategories) && rng.IntN(4) == 0 {
			c = rng.IntN(len(BidCategories))
		}
		count[c]++
		cat := BidCategories[c]
		key := fmt.Sprintf("%s-%04d", cat.Prefix, count[c])
		var desc string
		var qty, mass, buyout, hours float64
		factor := 1 + 0.02*float64(rng.IntN(8))
		switch cat.Name {
		case "plate":
			t := []int{6, 8, 10, 12, 16, 20}[rng.IntN(6)]
			w, l := 0.5+0.1*float64(rng.IntN(15)), 1+0.25*float64(rng.IntN(12))
			desc = fmt.Sprintf("plate %d mm, %.2f x %.2f m", t, w, l)
			mass = round2(float64(t) / 1000 * w * l * 7850)
			qty = float64(1 + rng.IntN(12))
			hours = round2(0.4 + 0.05*mass/10)
		case "beam":
			h := []int{150, 200, 250, 300, 360}[rng.IntN(5)]
			l := 2 + 0.5*float64(rng.IntN(12))
			desc = fmt.Sprintf("\"I\" beam %d, %.1f m", h, l)
			mass = round2(float64(h) * 0.12 * l)
			qty = float64(1 + rng.IntN(8))
			hours = round2(1.5 + 0.02*mass)
		case "grating":
			desc = fmt.Sprintf("grating panel 30x3, %d x 1000 mm", 600+100*rng.IntN(5))
			mass = round2(18 + 4*rng.Float64())
			qty = float64(2 + rng.IntN(20))
			buyout = round2(60 + 30*rng.Float64())
			hours = 0.3
		case "fasteners":
			d := []int{12, 16, 20, 24}[rng.IntN(4)]
			desc = fmt.Sprintf("bolt set M%d, grade 8.8, galvanised", d)
			mass = round2(0.05 * float64(d) / 12)
			qty = float64(50 * (1 + rng.IntN(40)))
			buyout = round2(0.4 + 0.08*float64(d))
			hours = 0.02
			factor = 0
		case "welding":
			desc = fmt.Sprintf("fillet weld a%d, %d m", 3+rng.IntN(5), 1+rng.IntN(10))
			qty = float64(1 + rng.IntN(30))
			buyout = round2(2 + 3*rng.Float64())
			hours = round2(0.5 + rng.Float64())
			factor = 0
		case "paint":
			desc = "two-coat system, m2"
			qty = float64(10 * (1 + rng.IntN(30)))
			buyout = round2(6 + 4*rng.Float64())
			hours = round2(0.1 + 0.1*rng.Float64())
			factor = 0
		case "erection":
			desc = fmt.Sprintf("erect and align, crane day %d", count[c])
			qty = 1
			buyout = round2(900 + 600*rng.Float64())
			hours = float64(16 + 8*rng.IntN(3))
			factor = 0
		}
		lo, hi := round3(hours*(0.8+0.1*rng.Float64())), round3(hours*(1.2+0.3*rng.Float64()))
		last := round2((mass*factor*1.35 + buyout + hours*95) * (0.9 + 0.2*rng.Float64()))
		fmt.Fprintf(&b, "%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s\r\n", key, cat.Name, csvQuote(desc), thousands(qty),
			num(mass), num(buyout), num(hours), num(lo), num(hi), num(factor), num(last))
	}
	return []byte(b.String())
}

func round2(x float64) float64 { return float64(int(x*100+0.5)) / 100 }
func round3(x float64) float64 { return float64(int(x*1000+0.5)) / 1000 }

func num(x float64) string { return strconv.FormatFloat(x, 'f', -1, 64) }

// thousands writes a whole number with thousands separators in quotes
// from 1,000 up, as a spreadsheet may export it.
func thousands(x float64) string {
	s := num(x)
	if x < 1000 {
		return s
	}
	return "\"" + s[:len(s)-3] + "," + s[len(s)-3:] + "\""
}

// csvQuote quotes a field that holds a comma or a quote.
func csvQuote(s string) string {
	if !strings.ContainsAny(s, ",\"") {
		return s
	}
	return "\"" + strings.ReplaceAll(s, "\"", "\"\"") + "\""
}
