package kernel

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
)

// Command is one command of the language: its verb, whose form sens/syntax
// parses (syntax.Command), a line of documentation with an example, the
// options it takes, and how it runs. Each command lives in a file of its own
// named for its verb; commands is the one table of them.
type Command struct {
	Verb    string
	Doc     string // what it shows, one line
	Example string
	Options []Option
	run     func(x *call) error
}

// Option is a key=value option of a command: a whole number of at least Min,
// or, with Quantity set, a number in the unit of the command's output, or,
// with Name set, a name (written as Name says: "COLUMN").
type Option struct {
	Key string
	Doc string
	// Min and Max bound a whole-number option; Max is MaxWhole when 0. A
	// count that sizes what an analysis keeps (samples, points, resamples)
	// has a Max of its own, so that a value the language accepts cannot
	// exhaust the kernel's memory; help and the README show it.
	Min, Max int
	Quantity bool
	Name     string
}

// MaxWhole is the largest value of a whole-number option without a Max of
// its own.
const MaxWhole = 10_000_000

// Most returns the largest value the option takes.
func (o Option) Most() int {
	if o.Max > 0 {
		return o.Max
	}
	return MaxWhole
}

// Form is how the option is written: "top=N", "target=T", "group=COLUMN".
func (o Option) Form() string {
	switch {
	case o.Name != "":
		return o.Key + "=" + o.Name
	case o.Quantity:
		return o.Key + "=T"
	}
	return o.Key + "=N"
}

// Usage is how the command is written with its options:
// "tornado OUT [top=N]".
func (c *Command) Usage() string {
	u := syntax.Command(c.Verb).Form
	for _, o := range c.Options {
		u += " [" + o.Form() + "]"
	}
	return u
}

// commands is the table of commands, by verb: the one place a command is
// registered.
var commands = table(
	driversCommand, tornadoCommand, exploreCommand, spiderCommand, sweepCommand, breakevenCommand,
	scenarioCommand, compareCommand, attributeCommand, exchangeCommand, basisCommand, simulateCommand, sobolCommand,
	morrisCommand, screenCommand, spearmanCommand, printCommand, resetCommand, chartsCommand,
	helpCommand, interactionsCommand,
)

func table(cs ...*Command) map[string]*Command {
	m := make(map[string]*Command, len(cs))
	for _, c := range cs {
		m[c.Verb] = c
	}
	return m
}

// call is one command being run: the statement, the file it is in, where
// its results go, and the interpreter it changes.
type call struct {
	in   *Interp
	ctx  context.Context
	f    *syntax.File
	c    *syntax.CommandStmt
	sink Sink
	cmd  *Command
}

// command runs one command statement.
func (in *Interp) command(ctx context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error {
	cmd := commands[c.Verb]
	x := &call{in: in, ctx: ctx, f: f, c: c, sink: sink, cmd: cmd}
	if cmd == nil {
		return x.errorf(c.VerbPos, "%s is not available in this version of nudge", c.Verb)
	}
	if err := x.checkOptions(); err != nil {
		return err
	}
	return cmd.run(x)
}

// errorf returns an error at pos in the command's file.
func (x *call) errorf(pos syntax.Pos, format string, args ...any) error {
	return posErr(x.f, pos, format, args...)
}

func posErr(f *syntax.File, pos syntax.Pos, format string, args ...any) error {
	p := f.Position(pos)
	return syntax.ErrorAt(f, p, fmt.Sprintf(format, args...))
}

// at places an error of the engine that names no position at pos; errors
// that carry their own position, and interruptions, pass unchanged.
func (x *call) at(pos syntax.Pos, err error) error {
	var se *syntax.Error
	var el syntax.ErrorList
	var ee *sens.EvalError
	switch {
	case err == nil, errors.As(err, &se), errors.As(err, &el), errors.As(err, &ee),
		errors.Is(err, context.Canceled), errors.Is(err, context.DeadlineExceeded):
		return err
	}
	return x.errorf(pos, "%v", err)
}

// checkOptions rejects options the command does not take, options given
// twice, and whole-number options out of range.
func (x *call) checkOptions() error {
	seen := map[string]bool{}
	for _, o := range x.c.Options {
		spec := x.option(o.Key.Name)
		if spec == nil {
			keys := make([]string, len(x.cmd.Options))
			for i, s := range x.cmd.Options {
				keys[i] = s.Key
			}
			hint := ""
			if len(keys) > 0 {
				hint = " (options: " + strings.Join(keys, ", ") + ")"
			}
			return x.errorf(o.Key.Pos(), "%s has no option %s%s", x.c.Verb, o.Key.Name, hint)
		}
		if seen[o.Key.Name] {
			return x.errorf(o.Key.Pos(), "%s is given twice", o.Key.Name)
		}
		seen[o.Key.Name] = true
		if spec.Name != "" {
			if _, ok := o.Value.(*syntax.Ident); !ok {
				return x.errorf(o.Value.Pos(), "%s takes a name: %s", o.Key.Name, spec.Form())
			}
			continue
		}
		if !spec.Quantity {
			if _, _, err := x.whole(o.Key.Name); err != nil {
				return err
			}
		}
	}
	return nil
}

func (x *call) option(key string) *Option {
	for i := range x.cmd.Options {
		if x.cmd.Options[i].Key == key {
			return &x.cmd.Options[i]
		}
	}
	return nil
}

// whole reads the whole-number option key: its value, and whether it was
// given.
func (x *call) whole(key string) (int, bool, error) {
	o := x.c.Option(key)
	if o == nil {
		return 0, false, nil
	}
	spec := x.option(key)
	lo, hi := spec.Min, spec.Most()
	v, err := sens.Constant(x.f, o.Value, "", key)
	if err != nil {
		return 0, true, err
	}
	if v != math.Trunc(v) || v < float64(lo) || v > float64(hi) {
		return 0, true, x.errorf(o.Value.Pos(), "%s must be a whole number from %d to %s, found %s", key, lo, count(hi), syntax.Brief(o.Value))
	}
	return int(v), true, nil
}

// quantity reads the option key, a number in the unit of the problem's
// output, or nil when it is not given.
func (x *call) quantity(pr *sens.Problem, key string) (*float64, error) {
	o := x.c.Option(key)
	if o == nil {
		return nil, nil
	}
	v, err := pr.Constant(x.f, o.Value, pr.Unit, "the "+key)
	if err != nil {
		return nil, err
	}
	return &v, nil
}

// settings returns the analysis settings of the command: the cell's context,
// and progress reported to the sink under an id unique to the command.
func (x *call) settings() sens.Settings {
	id := x.c.Verb + "@" + x.f.Position(x.c.VerbPos).String()
	label := x.c.Verb
	if x.c.Output != nil {
		label += " " + syntax.String(x.c.Output)
	}
	return sens.Settings{Ctx: x.ctx, Progress: func(done, total int) { x.sink.Progress(id, label, done, total) }}
}

// problem compiles the model with the command's output. A name is analysed
// as it is; an expression becomes an anonymous formula named by its text.
func (x *call) problem() (*sens.Problem, error) {
	out := x.c.Output
	name := syntax.String(out)
	var prog *sens.Program
	var err error
	if _, ok := out.(*syntax.Ident); ok {
		prog, err = x.in.Model.CompileContext(x.ctx)
	} else {
		prog, err = x.in.Model.CompileExprContext(x.ctx, name, x.f, out, nil)
	}
	if err != nil {
		return nil, err
	}
	pr, err := prog.Problem(name)
	if err != nil {
		return nil, x.errorf(out.Pos(), "%v", err)
	}
	x.in.warnings(prog, pr, x.sink)
	return pr, nil
}

// input returns the input an axis of the command varies.
func (x *call) input(pr *sens.Problem, a *syntax.Axis) (*sens.Input, error) {
	in, _, err := pr.Input(a.Name.Name)
	if err != nil {
		return nil, x.errorf(a.Name.Pos(), "%v", err)
	}
	return in, nil
}

// axisRange reads the range LOW..HIGH written after an axis's input, in the
// input's unit.
func (x *call) axisRange(pr *sens.Problem, a *syntax.Axis, in *sens.Input) (lo, hi float64, err error) {
	if lo, err = pr.Constant(x.f, a.Low, in.Unit, "the low end of the range of "+in.Name); err != nil {
		return 0, 0, err
	}
	if hi, err = pr.Constant(x.f, a.High, in.Unit, "the high end of the range of "+in.Name); err != nil {
		return 0, 0, err
	}
	// A unit at one end only (1..200 [min]) would read the bare number in
	// the input's unit, not the one written beside it: ask for both (after
	// the ends are read, so that a unit of another dimension is named first).
	if lu, hu := numberUnit(a.Low), numberUnit(a.High); (lu == nil) != (hu == nil) {
		bare, u := a.Low, hu
		if lu != nil {
			bare, u = a.High, lu
		}
		if n, ok := bareNumber(bare); ok {
			own := in.Unit
			if own == "" || own == "1" {
				own = "no unit"
			}
			fix := n + " [" + u.Text + "].." + syntax.String(a.High)
			if bare == a.High {
				fix = syntax.String(a.Low) + ".." + n + " [" + u.Text + "]"
			}
			return 0, 0, x.errorf(bare.Pos(), "the range %s..%s of %s has a unit at one end only, and %s alone would be read in %s's own unit (%s): write the unit at both ends (%s), or at neither",
				syntax.String(a.Low), syntax.String(a.High), in.Name, n, in.Name, own, fix)
		}
	}
	low, high := syntax.String(a.Low), syntax.String(a.High)
	switch {
	case lo > hi:
		return 0, 0, x.errorf(a.Low.Pos(), "the range %s..%s of %s is reversed: write %s..%s", low, high, in.Name, high, low)
	case lo == hi:
		return 0, 0, x.errorf(a.Low.Pos(), "the range %s..%s of %s is empty: its ends are equal", low, high, in.Name)
	}
	return lo, hi, nil
}

// numberUnit returns the unit written on a number, -number or +number; nil
// for anything else.
func numberUnit(e syntax.Expr) *syntax.UnitLit {
	switch v := e.(type) {
	case *syntax.NumberLit:
		return v.Unit
	case *syntax.UnaryExpr:
		return numberUnit(v.X)
	case *syntax.ParenExpr:
		return numberUnit(v.X)
	}
	return nil
}

// bareNumber returns the text of a number written without a unit (signed
// or in parentheses), and whether e is one.
func bareNumber(e syntax.Expr) (string, bool) {
	switch v := e.(type) {
	case *syntax.NumberLit:
		return syntax.String(v), v.Unit == nil
	case *syntax.UnaryExpr:
		_, ok := bareNumber(v.X)
		return syntax.String(v), ok
	case *syntax.ParenExpr:
		_, ok := bareNumber(v.X)
		return syntax.String(v), ok
	}
	return "", false
}

// show sends a result to the sink, marked with the command's place.
func (x *call) show(r *render.Result) {
	r.File, r.Line, r.Command = x.f.Name, x.f.Position(x.c.VerbPos).Line, x.c.Verb
	x.sink.Result(r, false)
}
