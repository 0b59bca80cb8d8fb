package tapebench

import (
	"fmt"
	"math/rand/v2"
	"strings"
)

// ScaleModel writes the scale model of the size benchmarks as model text: a
// bid of lines formula lines over about lines/4 inputs, an invented shape.
//
// Inputs come in five kinds, in turn: quantities (±10%), task times in
// minutes (±20%), labour rates in $/h with a normal distribution, masses in
// kg (-5%..+8%) and material prices in $/kg with a PERT distribution. Each
// line item is a product of inputs (quantity × minutes × rate, or quantity ×
// mass × price), about one in ten through max(..., a floor in $); with ifs,
// about one in five more applies a quantity discount, if(q > 20, 0.95, 1).
// Items are summed in subtotals of 100, subtotals in sections of 100, and
// the sections in one total, "total". A line makes about four tape nodes.
func ScaleModel(lines int, ifs bool, seed uint64) []byte {
	rng := rand.New(rand.NewPCG(seed, 13))
	lines = max(lines, 3)
	// lines = items + subtotals + sections + 1.
	items := lines - 1
	for items+(items+99)/100+(items+9999)/10000+1 > lines {
		items--
	}
	items = max(items, 1)
	nIn := max(5, lines/4)
	var b strings.Builder
	b.Grow(lines * 40)
	fmt.Fprintf(&b, "# A generated bid of %d lines (nudge bench model): an invented shape.\n", lines)
	kinds := [5][]int{}
	for i := 0; i < nIn; i++ {
		k := i % 5
		kinds[k] = append(kinds[k], i)
		switch k {
		case 0:
			fmt.Fprintf(&b, "input x%d = %d (±10%%)\n", i, 1+rng.IntN(40))
		case 1:
			fmt.Fprintf(&b, "input x%d = %d [min] (±20%%)\n", i, 5+rng.IntN(120))
		case 2:
			r := 40 + rng.IntN(80)
			fmt.Fprintf(&b, "input x%d = %d [$/h] ~ normal(%d, %d)\n", i, r, r, 1+r/12)
		case 3:
			fmt.Fprintf(&b, "input x%d = %.1f [kg] (-5%%..+8%%)\n", i, 0.5+float64(rng.IntN(300))/10)
		case 4:
			p := 2 + rng.IntN(20)
			fmt.Fprintf(&b, "input x%d = %d [$/kg] ~ pert(%d, %d, %d)\n", i, p, p-1, p, p+3)
		}
	}
	pick := func(k int) int { return kinds[k][rng.IntN(len(kinds[k]))] }
	for j := 0; j < items; j++ {
		q := pick(0)
		var prod string
		if rng.IntN(2) == 0 {
			prod = fmt.Sprintf("x%d * x%d * x%d", q, pick(1), pick(2))
		} else {
			prod = fmt.Sprintf("x%d * x%d * x%d", q, pick(3), pick(4))
		}
		switch k := rng.IntN(10); {
		case k == 0:
			fmt.Fprintf(&b, "item%d = max(%s, %d [$])\n", j, prod, 10+rng.IntN(90))
		case ifs && k <= 2:
			fmt.Fprintf(&b, "item%d = if(x%d > 20, 0.95, 1) * %s\n", j, q, prod)
		default:
			fmt.Fprintf(&b, "item%d = %s\n", j, prod)
		}
	}
	sum := func(name string, n int, part string, per int) int {
		groups := (n + per - 1) / per
		for g := 0; g < groups; g++ {
			fmt.Fprintf(&b, "%s%d = %s%d", name, g, part, g*per)
			for i := g*per + 1; i < min(n, (g+1)*per); i++ {
				fmt.Fprintf(&b, " + %s%d", part, i)
			}
			b.WriteByte('\n')
		}
		return groups
	}
	subs := sum("sub", items, "item", 100)
	secs := sum("section", subs, "sub", 100)
	b.WriteString("total = section0")
	for s := 1; s < secs; s++ {
		fmt.Fprintf(&b, " + section%d", s)
	}
	b.WriteString(" [$]\n")
	return []byte(b.String())
}
