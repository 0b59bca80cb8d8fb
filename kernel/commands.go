package kernel

import (
	"context"
	"fmt"
	"html"
	"math"
	"strings"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
)

// ValueResult is the JSON object of a bare expression.
type ValueResult struct {
	Kind  string  `json:"kind"` // "value"
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	Unit  string  `json:"unit"`
}

// command runs one analysis command.
func (in *Interp) command(ctx context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error {
	h, ok := commands[c.Verb]
	if !ok {
		return posErr(f, c.VerbPos, "%s is not available in this version of nudge", c.Verb)
	}
	return h(in, ctx, f, c, sink)
}

type commandFunc func(in *Interp, ctx context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error

// commands maps each verb to its handler. Analyses register themselves here.
var commands = map[string]commandFunc{}

func init() {
	commands["reset"] = func(in *Interp, _ context.Context, _ *syntax.File, _ *syntax.CommandStmt, _ Sink) error {
		in.Model.Reset()
		return nil
	}
	commands["print"] = func(_ *Interp, _ context.Context, _ *syntax.File, c *syntax.CommandStmt, sink Sink) error {
		sink.Stream("stdout", c.Text+"\n")
		return nil
	}
	commands["drivers"] = (*Interp).drivers
	commands["charts"] = (*Interp).charts
}

// charts sets how the rest of the session draws charts: "svg" (the default),
// "png" (image/png beside the SVG, for front ends and reports that want a
// bitmap) or "text" (Unicode charts only).
func (in *Interp) charts(_ context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error {
	switch c.Name.Name {
	case "svg":
		in.Opts.PNG, in.Opts.NoCharts = false, false
	case "png":
		in.Opts.PNG, in.Opts.NoCharts = true, false
	case "text":
		in.Opts.PNG, in.Opts.NoCharts = false, true
	default:
		msg := "charts takes svg, png or text"
		if s := syntax.Suggest(c.Name.Name, []string{"svg", "png", "text"}); s != "" {
			msg += " (did you mean " + s + "?)"
		}
		return posErr(f, c.Name.Pos(), "%s", msg)
	}
	sink.Stream("stdout", "charts: "+c.Name.Name+"\n")
	return nil
}

func posErr(f *syntax.File, pos syntax.Pos, format string, args ...any) error {
	p := f.Position(pos)
	return &syntax.Error{Pos: p, Msg: fmt.Sprintf(format, args...), Source: f.Line(p.Line)}
}

// problem compiles the model with the command's output. A name is analysed as
// it is; an expression becomes an anonymous formula named by its text.
func (in *Interp) problem(f *syntax.File, out syntax.Expr, sink Sink) (*sens.Program, *sens.Problem, error) {
	var prog *sens.Program
	var err error
	name := syntax.String(out)
	if id, ok := out.(*syntax.Ident); ok {
		prog, err = in.Model.Compile()
		if err == nil {
			if inp, _ := prog.Lookup(id.Name); inp != nil {
				return nil, nil, posErr(f, id.Pos(), "%s is an input: analyse a formula that uses it", id.Name)
			}
			if _, fm := prog.Lookup(id.Name); fm == nil {
				return nil, nil, in.undefinedOutput(f, id, prog)
			}
		}
	} else {
		prog, err = in.Model.CompileExpr(name, f, out, nil)
	}
	if err != nil {
		return nil, nil, err
	}
	pr, err := prog.Problem(name)
	if err != nil {
		return nil, nil, posErr(f, out.Pos(), "%v", err)
	}
	in.warnings(prog, pr, sink)
	return prog, pr, nil
}

func (in *Interp) undefinedOutput(f *syntax.File, id *syntax.Ident, prog *sens.Program) error {
	msg := "undefined: " + id.Name
	if s := syntax.Suggest(id.Name, prog.Names()); s != "" {
		msg += " (did you mean " + s + "?)"
	}
	return posErr(f, id.Pos(), "%s", msg)
}

// warnings sends the compile warnings and the step-function warning to stderr.
func (in *Interp) warnings(prog *sens.Program, pr *sens.Problem, sink Sink) {
	in.compileWarnings(prog, sink)
	if len(pr.Steps) > 0 {
		at := make([]string, 0, len(pr.Steps))
		seen := map[string]bool{}
		for _, s := range pr.Steps {
			// One mention per line: if(x > 5, ...) is one step, not two.
			key := fmt.Sprintf("%s:%d", s.Filename, s.Line)
			if !seen[key] {
				seen[key] = true
				at = append(at, s.String())
			}
		}
		warn(sink, "%s: a step-shaped operation (floor, ceil, round, if or a comparison) lies on the path of %s: its derivative is taken as 0, so local results can miss a jump", strings.Join(at, ", "), pr.Output)
	}
}

// value shows the value of a bare expression.
func (in *Interp) value(f *syntax.File, s *syntax.ExprStmt) (*Result, error) {
	name := syntax.String(s.X)
	var prog *sens.Program
	var err error
	if id, ok := s.X.(*syntax.Ident); ok && s.Unit == nil {
		prog, err = in.Model.Compile()
		if err == nil {
			if inp, _ := prog.Lookup(id.Name); inp != nil {
				v := ValueResult{Kind: "value", Name: inp.Name, Value: inp.Value, Unit: inp.Unit}
				return valueResult(v), nil
			}
			if _, fm := prog.Lookup(id.Name); fm == nil {
				return nil, in.undefinedOutput(f, id, prog)
			}
		}
	} else {
		// The expression becomes a formula of its own; with a unit to show it
		// in, its name carries the unit, so that it never clashes with a
		// formula of the model ("price [k$]" beside price).
		internal := name
		if s.Unit != nil {
			internal += " [" + s.Unit.Text + "]"
		}
		prog, err = in.Model.CompileExpr(internal, f, s.X, s.Unit)
		name = internal
	}
	if err != nil {
		return nil, err
	}
	fn, err := prog.Fn(name)
	if err != nil {
		return nil, posErr(f, s.X.Pos(), "%v", err)
	}
	name = syntax.String(s.X)
	y, err := fn.Eval(prog.Baseline())
	if err != nil {
		return nil, err
	}
	return valueResult(ValueResult{Kind: "value", Name: name, Value: y, Unit: fn.Formula().Unit}), nil
}

func valueResult(v ValueResult) *Result {
	text := v.Name + " = " + withUnit(v.Value, v.Unit)
	return &Result{Kind: "value", Data: v, Text: text,
		HTML: `<p class="nudge-value"><code>` + html.EscapeString(v.Name) + `</code> = <b>` + html.EscapeString(withUnit(v.Value, v.Unit)) + `</b></p>`}
}

// drivers runs "drivers OUT".
func (in *Interp) drivers(_ context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error {
	top, err := topOption(f, c)
	if err != nil {
		return err
	}
	_, pr, err := in.problem(f, c.Output, sink)
	if err != nil {
		return err
	}
	d, err := sens.ComputeDrivers(pr)
	if err != nil {
		return err
	}
	if top > 0 && top < len(d.Inputs) {
		d.Inputs = d.Inputs[:top]
	}
	sink.Result(driversResult(d, in.Opts.Width), false)
	return nil
}

// topOption reads the only option of drivers and tornado, top=N (0 when
// absent), and rejects any other.
func topOption(f *syntax.File, c *syntax.CommandStmt) (int, error) {
	if err := noOptions(f, c, "top"); err != nil {
		return 0, err
	}
	if o := c.Option("top"); o != nil {
		return intOption(f, o, 1)
	}
	return 0, nil
}

func noOptions(f *syntax.File, c *syntax.CommandStmt, allowed ...string) error {
	for _, o := range c.Options {
		ok := false
		for _, a := range allowed {
			ok = ok || o.Key.Name == a
		}
		if !ok {
			msg := fmt.Sprintf("%s has no option %s", c.Verb, o.Key.Name)
			if len(allowed) > 0 {
				msg += " (options: " + strings.Join(allowed, ", ") + ")"
			}
			return posErr(f, o.Key.Pos(), "%s", msg)
		}
	}
	return nil
}

func driversResult(d *sens.Drivers, barWidth int) *Result {
	t := &table{head: []string{"input", "value", "∂" + wrapExpr(d.Output) + "/∂input", "elasticity", ""}, right: []bool{false, true, true, true, false}}
	bw := barWidth / 3
	if bw < 8 {
		bw = 8
	}
	shown := d.Inputs
	if len(shown) > maxTableRows {
		shown = shown[:maxTableRows]
	}
	for _, x := range shown {
		t.add(x.Name, withUnit(x.Value, x.Unit), withUnit(x.Partial, x.PartialUnit), fmt.Sprintf("%+.4f", x.Elasticity), bar(x.Share, bw))
	}
	head := fmt.Sprintf("%s = %s at the baseline; inputs ranked by |elasticity| (%% change of %s per 1%% change of the input)\n",
		d.Output, withUnit(d.Value, d.Unit), d.Output)
	text := head + t.text()
	th := *t
	th.head = th.head[:4]
	for i := range th.rows {
		th.rows[i] = th.rows[i][:4]
	}
	if rest := len(d.Inputs) - len(shown); rest > 0 {
		more := fmt.Sprintf("… and %s more inputs, each with |elasticity| at most %.4f (all of them are in the JSON; top=N keeps N)",
			num(float64(rest)), math.Abs(d.Inputs[len(shown)].Elasticity))
		text += more + "\n"
		th.rows = append(th.rows, []string{more, "", "", ""})
	}
	return &Result{Kind: "drivers", Data: d, Text: text, HTML: th.html(strings.TrimSpace(head)), Caution: true}
}

// bar draws a fraction 0..1 as Unicode block characters, eighths included.
func bar(frac float64, width int) string {
	if frac < 0 {
		frac = 0
	}
	if frac > 1 {
		frac = 1
	}
	eighths := int(frac*float64(width)*8 + 0.5)
	full := eighths / 8
	s := strings.Repeat("█", full)
	if r := eighths % 8; r > 0 {
		s += string([]rune("▏▎▍▌▋▊▉")[r-1])
	}
	return s
}

// wrapExpr puts an output written as an expression in parentheses, for
// notation such as ∂(y / a)/∂input.
func wrapExpr(name string) string {
	if strings.ContainsAny(name, " +-*/^()") {
		return "(" + name + ")"
	}
	return name
}
