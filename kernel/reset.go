package kernel

var resetCommand = &Command{
	Verb:    "reset",
	Doc:     "forgets every input, formula and scenario",
	Example: "reset",
	run:     func(x *call) error { x.in.Model.Reset(); return nil },
}
