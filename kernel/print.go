package kernel

var printCommand = &Command{
	Verb:    "print",
	Doc:     "writes a line of text",
	Example: `print "Plant A"`,
	run:     func(x *call) error { x.sink.Stream("stdout", x.c.Text+"\n"); return nil },
}
