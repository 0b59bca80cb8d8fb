// Package tape is the differentiation engine of nudge: a computation recorded
// as a flat list of operations, evaluated by a forward pass and
// differentiated by a reverse (adjoint) pass, one sample at a time or in
// batches. It uses the standard library only.
//
// A Builder records operations on slots (inputs, constants, results) and
// freezes the outputs it is asked for into a Tape:
//
//	b := tape.NewBuilder()
//	i, n := b.Input(), b.Input()
//	t := b.Tape(b.Binary(tape.OpRecovery, i, n))
//	grad := make([]float64, 2)
//	v, err := t.Gradient(grad, []float64{0.10, 5}, 0) // 0.26380, ∂/∂i, ∂/∂n
//
// The passes of a Tape:
//
//	Forward, Eval          the forward pass: every output, or one
//	Reverse, Gradient      the reverse pass: every partial derivative of one
//	                       output for the cost of about two forward passes
//	ForwardBatch,          the batched passes over many samples, each
//	GradientBatch          operation run over a block of samples in turn
//	InputDeps, StepOps     tracing: the inputs an output depends on, and the
//	                       step operations (floor, if, ...) on its path
//
// Every node carries a position, an opaque number set with Builder.SetPos:
// the caller's index into its own table of source positions (package sens
// maps it to a formula, line and column). A NaN or ±Inf never passes
// silently: a pass returns a *DomainError naming the operation where it
// arose, its position and its operand values ("ln of a negative number
// (-3)"), and in a batched pass the sample.
//
// Each Op documents its value and its derivative convention at kinks, steps
// and the edge of its domain. The engineering-economy factors and the unit
// learning curve (Growth, Recovery, Learn, ...) are exported as plain
// functions too, for Go code that needs the same numbers.
package tape
