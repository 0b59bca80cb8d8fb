package render_test

import (
	"fmt"
	"strings"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

// A cost of hours·(rate + 10 $/h) at 2 h and 60 $/h is $140; its partial
// derivatives are 70 $/h and 2 h, its elasticities 1 in hours and 120/140 in
// rate (by hand). In a Go notebook (gophernotes) the last value of a cell,
// render.Drivers(d, nil), shows as the HTML table with its chart.
func ExampleDrivers() {
	m, err := sens.LoadModel("example", []byte(`
input hours = 2 [h]
input rate  = 60 [$/h]
cost = hours * (rate + 10 [$/h])
`))
	if err != nil {
		fmt.Println(err)
		return
	}
	prog, err := m.Compile()
	if err != nil {
		fmt.Println(err)
		return
	}
	p, err := prog.Problem("cost")
	if err != nil {
		fmt.Println(err)
		return
	}
	d, err := sens.Drivers(p, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	r := render.Drivers(d, nil)
	fmt.Print(r.Text())
	fmt.Println(strings.HasPrefix(r.HTML(), `<div class="nudge-result`), r.Caution)
	// Output:
	// cost = $140 at the baseline; inputs ranked by |elasticity| (% change of cost per 1% change of the
	//   input)
	// input   value  ∂cost/∂input  elasticity
	// ─────  ──────  ────────────  ──────────  ──────────────────
	// hours     2 h        70 $/h     +1.0000  █████████████████▊
	// rate   60 $/h           2 h     +0.8571  ███████████████▎
	// true true
}
