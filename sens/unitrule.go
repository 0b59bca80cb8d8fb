package sens

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/unit"
)

// The trailing-bracket rule. The last bracket of a formula line is the
// line's declared unit:
//
//	total = units * price [$]
//
// and a declared unit is checked: y = m * 3 [$] with m in kg is an error
// (which suggests (3 [$]) when that reading checks). Only when the formula
// read with a bare number there fails the unit check by itself (a sum of $
// and a plain number) and reading the bracket as that number's unit makes it
// pass is the number's reading taken:
//
//	c = 2 [h] * 50 [$/h] + 3 * 12 [$]     136 $: a fixed fee of 3 × 12 $
//
// A formula that is a constant written without units takes the declared unit
// as its own, as an input's value does: fee = 3 * 12 [$] is 36 $.

// trailingBracket applies the rule to the formula s, whose value compiled
// with a bare number is bare; nerrs is the length of the error list before
// that compilation. It returns the value to keep, the declared unit (nil
// when the bracket was the number's), and a suggestion to add to a mismatch
// message ("" for none).
func (c *compiler) trailingBracket(f *syntax.File, s *syntax.FormulaStmt, bare val, nerrs int) (val, *syntax.UnitLit, string) {
	declared := s.Unit
	u, ok := c.quietUnit(declared.Text)
	if !ok {
		return bare, declared, "" // the unit's own error is reported with the declaration
	}
	n := lastNumber(s.Value)
	if !bare.bad {
		switch {
		case bare.dim.Equal(u.Dim):
		case bare.konst && bare.dim.IsDimensionless() && !hasUnit(s.Value):
			cv := bare.c * u.Factor
			return val{slot: c.b.Const(cv), dim: u.Dim, konst: true, c: cv, hint: &u}, declared, ""
		case n != nil:
			if w := c.numberReading(f, s, n, declared); !w.bad && !w.boolean {
				return bare, declared, fmt.Sprintf(": if [%s] is the unit of %s, write (%s [%s])", declared.Text, n.Lit, n.Lit, declared.Text)
			}
		}
		return bare, declared, ""
	}
	if n == nil {
		return bare, declared, ""
	}
	if w := c.numberReading(f, s, n, declared); !w.bad && !w.boolean {
		c.errs = c.errs[:nerrs] // the bare reading's errors were all about that number
		return w, nil, ""
	}
	return bare, declared, ""
}

// numberReading compiles the formula s with the bracket ul read as the unit
// of the number n, reporting nothing.
func (c *compiler) numberReading(f *syntax.File, s *syntax.FormulaStmt, n *syntax.NumberLit, ul *syntax.UnitLit) val {
	nerrs := len(c.errs)
	c.numberUnit = map[*syntax.NumberLit]*syntax.UnitLit{n: ul}
	w := c.expr(f, s.Value, false)
	c.numberUnit = nil
	c.errs = c.errs[:nerrs]
	return w
}

// lastNumber returns the number without a unit that ends x outside any
// parentheses, or nil: the number a trailing [unit] would have belonged to.
func lastNumber(x syntax.Expr) *syntax.NumberLit {
	for {
		switch e := x.(type) {
		case *syntax.BinaryExpr:
			x = e.Y
		case *syntax.UnaryExpr:
			x = e.X
		case *syntax.NumberLit:
			if e.Unit == nil {
				return e
			}
			return nil
		default:
			return nil
		}
	}
}

// quietUnit parses unit text as the compiler reads it, reporting nothing.
func (c *compiler) quietUnit(text string) (unit.Unit, bool) {
	u, err := unit.Parse(text)
	return u.In(c.rates), err == nil
}

// shown returns the unit in which a message shows v, the value of x: the
// units as the user wrote them (60 [$/h] stays $/h, kg times h is kg*h),
// else the unit the value is displayed in.
func (c *compiler) shown(x syntax.Expr, v val) unit.Unit {
	if w := c.written(x); w != nil && w.Dim.Equal(v.dim) {
		return *w
	}
	return c.display(v)
}

// written composes the units x was written in, or returns nil when they
// cannot be told (an error path only: the hot path keeps no such record).
func (c *compiler) written(x syntax.Expr) *unit.Unit {
	switch x := x.(type) {
	case *syntax.NumberLit:
		ul := x.Unit
		if ul == nil {
			ul = c.numberUnit[x]
		}
		if ul == nil {
			return nil
		}
		if u, ok := c.quietUnit(ul.Text); ok {
			return &u
		}
	case *syntax.Ident:
		if e := c.entry(x.Name); e != nil && e.set && !e.v.bad {
			return e.v.hint
		}
	case *syntax.ParenExpr:
		return c.written(x.X)
	case *syntax.UnaryExpr:
		return c.written(x.X)
	case *syntax.CallExpr:
		if info := lookupFunc(x.Fun.Name); info != nil && len(x.Args) > 0 {
			switch info.Units {
			case UnitsSame, UnitsFirst:
				return c.written(x.Args[0])
			case UnitsIf:
				if len(x.Args) > 1 {
					return c.written(x.Args[1])
				}
			}
		}
	case *syntax.BinaryExpr:
		a, b := c.written(x.X), c.written(x.Y)
		switch x.Op {
		case syntax.ADD, syntax.SUB:
			if a != nil {
				return a
			}
			return b
		case syntax.MUL, syntax.QUO:
			switch {
			case b == nil:
				return a // scaled by a plain number (or unknown)
			case a == nil && x.Op == syntax.MUL:
				return b
			case a == nil:
				q := unit.One().Div(*b)
				return &q
			}
			q := a.Mul(*b)
			if x.Op == syntax.QUO {
				q = a.Div(*b)
			}
			return &q
		}
	}
	return nil
}
