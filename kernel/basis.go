package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
)

var basisCommand = &Command{
	Verb:    "basis",
	Doc:     "the basis of estimate: every input (or every input of OUT) with its value, range or distribution, where the range came from and its line",
	Example: "basis total",
	run:     runBasis,
}

// runBasis runs "basis [OUT]".
func runBasis(x *call) error {
	var prog *sens.Program
	var err error
	out := x.c.Output
	if _, ok := out.(*syntax.Ident); ok || out == nil {
		prog, err = x.in.Model.CompileContext(x.ctx)
	} else {
		prog, err = x.in.Model.CompileExprContext(x.ctx, syntax.String(out), x.f, out, nil)
	}
	if err != nil {
		return err
	}
	if id, ok := out.(*syntax.Ident); ok {
		if in, f := prog.Lookup(id.Name); in == nil && f == nil {
			return x.errorf(id.Pos(), "undefined: %s%s", id.Name, syntax.DidYouMean(id.Name, prog.Names()))
		}
	}
	res, err := x.in.Model.Basis(prog, out)
	if err != nil {
		return x.at(x.c.VerbPos, err)
	}
	x.show(render.Basis(res, &x.in.Opts))
	return nil
}
