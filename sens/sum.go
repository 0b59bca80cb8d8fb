package sens

import (
	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/tape"
)

// longSumTerms is the number of terms from which a sum written a + b + c +
// ... is added pairwise.
const longSumTerms = 16

// longSum compiles a sum of longSumTerms terms or more, written
// t0 + t1 + ... + tn, as a balanced tree, (t0 + t1) + (t2 + t3) and so on,
// instead of the left-to-right chain the parser reads. It reports false for
// any other expression, which binary compiles as written.
//
// Pairwise summation bounds the rounding error of n terms by about
// log2(n) rounding units instead of n - 1, and it keeps the part of the
// tape that depends on one term short: a one-at-a-time analysis that moves
// an input re-evaluates log2(n) additions of each sum the input reaches
// instead of, on average, half the chain (see tape.Cones). The terms are
// checked from left to right, with the messages of binary, and each
// addition carries the position of one of the + signs.
//
// References:
//   - N. J. Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed.,
//     SIAM, 2002, §4.2 (pairwise summation).
func (c *compiler) longSum(f *syntax.File, x *syntax.BinaryExpr, constCtx bool) (val, bool) {
	// spine and terms are taken from buffers the compiler keeps (a term may
	// hold a long sum of its own, which takes the buffers' next part), so a
	// model of many sums does not allocate them once a sum.
	base, tbase := len(c.sumSpine), len(c.sumTerms)
	defer func() {
		clear(c.sumSpine[base:])
		c.sumSpine = c.sumSpine[:base]
		c.sumTerms = c.sumTerms[:tbase]
	}()
	for e := x; ; {
		if e.Op != syntax.ADD {
			break
		}
		c.sumSpine = append(c.sumSpine, e)
		next, ok := e.X.(*syntax.BinaryExpr)
		if !ok {
			break
		}
		e = next
	}
	spine := c.sumSpine[base:] // outermost first
	if len(spine)+1 < longSumTerms {
		return val{}, false
	}
	// spine[k] joins terms[k] (the sum so far) and terms[k+1], innermost
	// first.
	for i, j := 0, len(spine)-1; i < j; i, j = i+1, j-1 {
		spine[i], spine[j] = spine[j], spine[i]
	}
	c.sumTerms = append(c.sumTerms, make([]val, len(spine)+1)...)
	terms := c.sumTerms[tbase:]
	terms[0] = c.expr(f, spine[0].X, constCtx)
	if terms[0].bad {
		return val{bad: true}, true
	}
	sum := terms[0] // the sum so far, for checks and messages
	for k, e := range spine {
		terms[k+1] = c.expr(f, e.Y, constCtx)
		a, b := sum, terms[k+1]
		if b.bad {
			return val{bad: true}, true
		}
		if a.boolean || b.boolean {
			pos := e.X.Pos()
			if !a.boolean {
				pos = e.Y.Pos()
			}
			c.errorf(f, pos, "a condition (true or false) cannot be used as a number here: use if(condition, a, b)")
			return val{bad: true}, true
		}
		if !a.dim.Equal(b.dim) {
			c.errorf(f, e.OpPos, "cannot add %s and %s: units %s and %s do not match (%s vs %s)",
				syntax.Brief(e.X), syntax.Brief(e.Y), orOne(unitText(c.display(a))), orOne(unitText(c.display(b))), dimName(a.dim), dimName(b.dim))
			return val{bad: true}, true
		}
		if sum.hint == nil {
			sum.hint = b.hint
		}
	}
	var add func(lo, hi int) val
	add = func(lo, hi int) val {
		if hi-lo == 1 {
			return terms[lo]
		}
		m := (lo + hi) / 2
		a, b := add(lo, m), add(m, hi)
		c.setPos(f, spine[m-1].OpPos)
		hint := a.hint
		if hint == nil {
			hint = b.hint
		}
		sa, sb, sc := c.alike(a, b)
		return val{slot: c.b.Binary(tape.OpAdd, sa, sb), dim: a.dim, hint: hint, konst: a.konst && b.konst, c: a.c + b.c, sc: sc}
	}
	return add(0, len(terms)), true
}
