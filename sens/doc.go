// Package sens is the engine of nudge: it compiles a cost model (inputs with
// units, ranges and distributions; formulas in any order) to a tape with
// reverse-mode automatic differentiation, and runs sensitivity analyses on it.
//
// A model travels one path, a type at each step:
//
//	Model      the declarations as parsed: LoadModel reads a file; Define
//	   |       adds one statement (a notebook cell at a time)
//	   | Model.Compile: names, cycles, units, ranges and distributions
//	   v
//	Program    every input and formula, and one tape (package tape) that
//	   |       evaluates them all, its nodes mapped to formula, line and column
//	   | Program.Problem(output)
//	   v
//	Problem    one output as a Function of the inputs it depends on, in
//	   |       the users' own units, with their baselines, ranges and
//	   |       distributions, and the rank correlations among them
//	   | an analysis: drivers, tornado, spider, sweep, break-even, compare;
//	   | from the distributions: simulate, Sobol', Morris, screen
//	   v
//	result     a plain struct with JSON tags and a "kind" (package
//	           kernel/render turns it into text, HTML and a chart)
//
// For example, the tornado of a part's cost (Example_path runs it):
//
//	m, err := sens.LoadModel("part.nudge", src)
//	prog, err := m.Compile()
//	pr, err := prog.Problem("total")
//	r, err := sens.Tornado(pr, nil) // nil settings: the defaults
//	for _, b := range r.Bars {
//		fmt.Println(b.Name, b.OutputAtLow, b.OutputAtHigh, b.Swing)
//	}
//
// Errors in a model come back as a syntax.ErrorList (line, column, source
// line, and a suggested fix where there is one); a failure while evaluating,
// such as the log of a negative number, is an *EvalError placed at the
// formula and column that caused it, with the input values that led there.
//
// An analysis needs only a Problem, so it also runs on a function written in
// Go (FuncOf) with inputs made by hand (NewInput).
//
// The sampling analyses (Simulate, Sobol, Morris, Screen) run on every core
// and give the same result for a seed whatever the number of goroutines;
// sens/qmc supplies their Sobol' points.
//
// sens builds on sens/syntax (tokens, parser, positions), sens/unit (units
// and dimensions), sens/tape (the differentiation engine) and sens/qmc
// (quasi-random points); it imports
// neither the kernel nor the plotting package.
package sens
