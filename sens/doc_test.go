package sens_test

import (
	"fmt"
	"log"

	"github.com/nudge-dev/nudge/sens"
)

// Example_path runs the path of the package documentation: Model, Program,
// Problem, an analysis (the tornado) and its result. The first three bars
// check by hand: total = units (hours rate + parts) is 101,000 at the
// baseline, and 800 units give 800 (90 + 11) = 80,800.
func Example_path() {
	src := []byte(`
input units = 1000          (800..1300)
input hours = 1.5 [h]       (±20%)
input rate  = 60 [$/h]      (55..70)
input parts = 11 [$]        ~ pert(10, 11, 14)
total = units * (hours * rate + parts) [$]
`)
	m, err := sens.LoadModel("part.nudge", src)
	if err != nil {
		log.Fatal(err)
	}
	prog, err := m.Compile()
	if err != nil {
		log.Fatal(err)
	}
	pr, err := prog.Problem("total")
	if err != nil {
		log.Fatal(err)
	}
	r, err := sens.Tornado(pr, nil) // nil settings: the defaults
	if err != nil {
		log.Fatal(err)
	}
	for _, b := range r.Bars {
		fmt.Printf("%-5s %8.0f %8.0f  swing %6.0f\n", b.Name, b.OutputAtLow, b.OutputAtHigh, b.Swing)
	}
	// Output:
	// units    80800   131300  swing  50500
	// hours    83000   119000  swing  36000
	// rate     93500   116000  swing  22500
	// parts   100449   102336  swing   1887
}
