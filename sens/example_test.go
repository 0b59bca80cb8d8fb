package sens_test

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens"
)

// Example compiles a small cost model from text and ranks its drivers: the
// path a Go program (or a gophernotes cell) takes without the kernel.
func Example() {
	src := `
input units = 1000          (800..1300)
input mass  = 12 [kg]       (-5%..+8%)
input steel = 0.9 [$/kg]    ~ pert(0.8, 0.9, 1.2)
input hours = 1.5 [h]       (±20%)
input rate  = 60 [$/h]
total = units * (mass * steel + hours * rate) [$]
`
	m, err := sens.LoadModel("part.nudge", []byte(src))
	if err != nil {
		fmt.Println(err)
		return
	}
	prog, err := m.Compile()
	if err != nil {
		fmt.Println(err)
		return
	}
	pr, err := prog.Problem("total")
	if err != nil {
		fmt.Println(err)
		return
	}
	d, err := sens.Drivers(pr, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("total = %.0f %s\n", d.Value, d.Unit)
	for _, in := range d.Inputs {
		fmt.Printf("%-6s %8.4g %-6s elasticity %+.4f\n", in.Name, in.Partial, in.PartialUnit, in.Elasticity)
	}
	// Output:
	// total = 100800 $
	// units     100.8 $      elasticity +1.0000
	// hours     6e+04 $/h    elasticity +0.8929
	// rate       1500 h      elasticity +0.8929
	// mass        900 $/kg   elasticity +0.1071
	// steel   1.2e+04 kg     elasticity +0.1071
}
