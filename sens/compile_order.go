package sens

import (
	"context"
	"fmt"
	"strings"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// formulaOrder returns the model's formulas in the order they are compiled:
// every formula after the formulas it uses, in the order a depth-first walk
// from each formula in declaration order, through its references from left
// to right, finishes them. The walk keeps its own stack, so 100,000
// formulas each written before the one it uses cost no recursion: compiling
// in this order, every reference finds its formula done.
//
// A reference that closes a cycle is reported here ("cycle: a -> b -> a",
// at the reference) and remembered in c.cycleRefs, where ident finds it
// and stops instead of following it.
func (c *compiler) formulaOrder() []*Decl {
	const (
		unseen = iota
		open
		closed
	)
	mark := make([]uint8, len(c.ents)) // by Decl.idx
	order := make([]*Decl, 0, len(c.decls))
	type frame struct {
		d    *Decl
		refs []formulaRef // references to formulas, left to right
		next int
	}
	var stack []frame
	var refs []formulaRef // the references of every formula pushed, one after another
	push := func(d *Decl) {
		mark[d.idx] = open
		start := len(refs)
		c.numbered = parsedFrom(d.File, d.Formula.Name)
		refs = c.formulaRefs(refs, d.File, d.Formula.Value)
		c.numbered = false
		stack = append(stack, frame{d: d, refs: refs[start:len(refs):len(refs)]})
	}
	for _, d := range c.list {
		if d.Formula == nil || mark[d.idx] != unseen {
			continue
		}
		refs = refs[:0]
		push(d)
		for len(stack) > 0 {
			top := &stack[len(stack)-1]
			if top.next == len(top.refs) {
				mark[top.d.idx] = closed
				order = append(order, top.d)
				stack = stack[:len(stack)-1]
				continue
			}
			r := top.refs[top.next]
			top.next++
			switch mark[r.d.idx] {
			case unseen:
				push(r.d)
			case open:
				i := len(stack) - 1
				for stack[i].d != r.d {
					i--
				}
				path := make([]string, 0, len(stack)-i+1)
				for _, fr := range stack[i:] {
					path = append(path, fr.d.Name)
				}
				path = append(path, r.d.Name)
				c.errorf(top.d.File, r.id.Pos(), "cycle: %s", cyclePath(path))
				if c.cycleRefs == nil {
					c.cycleRefs = map[*syntax.Ident]bool{}
				}
				c.cycleRefs[r.id] = true
			}
		}
	}
	return order
}

// formulaRef is a reference to a formula of the model.
type formulaRef struct {
	id *syntax.Ident
	d  *Decl
}

// formulaRefs appends to refs the references in x, an expression of file
// f, to formulas of the model, left to right (in the order of syntax.Walk).
func (c *compiler) formulaRefs(refs []formulaRef, f *syntax.File, x syntax.Expr) []formulaRef {
	switch x := x.(type) {
	case *syntax.Ident:
		if i := c.declIdx(f, x); i >= 0 {
			if d := c.list[i]; d.Formula != nil {
				refs = append(refs, formulaRef{x, d})
			}
		} else if d := c.decls[refBase(x.Name)]; d != nil && d.Formula != nil {
			refs = append(refs, formulaRef{x, d})
		}
	case *syntax.ParenExpr:
		refs = c.formulaRefs(refs, f, x.X)
	case *syntax.UnaryExpr:
		refs = c.formulaRefs(refs, f, x.X)
	case *syntax.BinaryExpr:
		refs = c.formulaRefs(refs, f, x.X)
		refs = c.formulaRefs(refs, f, x.Y)
	case *syntax.CallExpr:
		for _, a := range x.Args {
			refs = c.formulaRefs(refs, f, a)
		}
	}
	return refs
}

// refBase returns the name a reference reaches: name for name[key], else
// the reference itself.
func refBase(ref string) string {
	if base, _, ok := splitElement(ref); ok {
		return base
	}
	return ref
}

// maxCyclePath is the most names a cycle message lists.
const maxCyclePath = 12

// cyclePath joins a cycle's names with arrows, leaving out the middle of a
// long one.
func cyclePath(path []string) string {
	if len(path) <= maxCyclePath {
		return strings.Join(path, " -> ")
	}
	head, tail := path[:maxCyclePath/2], path[len(path)-maxCyclePath/2:]
	return fmt.Sprintf("%s -> … (%d more) -> %s", strings.Join(head, " -> "), len(path)-len(head)-len(tail), strings.Join(tail, " -> "))
}

// canceled reports whether the compile's context is done, checking it every
// checkEvery calls.
func (c *compiler) canceled() bool {
	if c.ctx == nil {
		return false
	}
	c.ticks++
	if c.ticks%checkEvery != 0 {
		return false
	}
	return c.ctx.Err() != nil
}

// checkEvery is how many formulas the compiler compiles between looks at
// its context.
const checkEvery = 64

// undefinedHints adds "did you mean" to the undefined names among the
// errors kept, once they are known: a model of thousands of formulas with
// one input renamed has thousands of undefined references, and only the
// first ten errors are shown.
func (c *compiler) undefinedHints() {
	if len(c.undef) == 0 {
		return
	}
	var cands []string
	for _, e := range c.errs {
		name, ok := c.undef[e]
		if !ok {
			continue
		}
		if cands == nil {
			cands = append(c.m.Names(), "pi")
			for _, fn := range Functions {
				cands = append(cands, fn.Name)
			}
			for _, fn := range VectorFunctions {
				cands = append(cands, fn.Name)
			}
		}
		e.Msg += syntax.DidYouMean(name, cands)
	}
}

// compileContext compiles m, stopping with ctx's error when ctx is done.
func compileContext(ctx context.Context, m *Model, extra *extraFormula) (*Program, error) {
	c := newCompiler(m, extra)
	c.ctx = ctx
	return c.run()
}
