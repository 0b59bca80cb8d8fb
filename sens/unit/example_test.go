package unit_test

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens/unit"
)

// 90 minutes of work at 60 $/h. On the tape every value is held in base units; results are
// shown in a declared unit, or else in the simplest unit of their dimension.
func Example() {
	minutes := unit.MustParse("min")
	rate := unit.MustParse("$/h")

	t := 90 * minutes.Factor // 5400 (seconds)
	r := 60 * rate.Factor    // 1/60 ($ per second)
	cost := minutes.Mul(rate)
	fmt.Printf("%g s × %.6f $/s = %.2f %s\n", t, r, t*r, unit.Simplest(cost.Dim))

	h, _ := unit.Convert(t, unit.MustParse("s"), unit.MustParse("h"))
	fmt.Println(h, "h")

	_, err := unit.Convert(1, minutes, unit.MustParse("kg"))
	fmt.Println(err)

	_, err = unit.Parse("$/kgg")
	fmt.Println(err)
	// Output:
	// 5400 s × 0.016667 $/s = 90.00 $
	// 1.5 h
	// cannot convert min to kg: time vs mass
	// offset 2: unknown unit "kgg" (did you mean kg?)
}
