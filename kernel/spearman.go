package kernel

var spearmanCommand = &Command{
	Verb:    "spearman",
	Doc:     "declares a rank correlation between two inputs, which simulate imposes",
	Example: "spearman steel, energy = 0.6",
	run:     runSpearman,
}

// runSpearman declares "spearman X, Y = RHO"; the model checks it with the
// rest (at the end of the cell, or at the next command).
func runSpearman(x *call) error {
	x.in.Model.DefineCorrelation(x.f, x.c)
	return nil
}
