package qmc_test

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens/qmc"
)

// The first points of a three-dimensional Sobol' sequence, after the origin.
func ExampleSobol() {
	s, err := qmc.NewSobol(3)
	if err != nil {
		panic(err)
	}
	x := make([]float64, 3)
	s.Next(x) // the origin
	for range 4 {
		fmt.Println(s.Next(x))
	}
	// Output:
	// [0.5 0.5 0.5]
	// [0.75 0.25 0.25]
	// [0.25 0.75 0.75]
	// [0.375 0.375 0.625]
}
