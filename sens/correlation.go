package sens

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/unit"
	"gonum.org/v1/gonum/mat"
)

// CorrDecl is a declared rank correlation between two inputs:
//
//	spearman steel, rate = 0.7
type CorrDecl struct {
	File *syntax.File
	Stmt *syntax.CommandStmt // Names: the two inputs; Target: the coefficient
}

func (d *CorrDecl) key() [2]string {
	a, b := d.Stmt.Names[0].Name, d.Stmt.Names[1].Name
	if b < a {
		a, b = b, a
	}
	return [2]string{a, b}
}

// DefineCorrelation adds or replaces the rank correlation declared by c (a
// spearman command) for its pair of inputs, in either order. It reports
// whether the pair had one before.
func (m *Model) DefineCorrelation(f *syntax.File, c *syntax.CommandStmt) (replaced bool) {
	d := &CorrDecl{File: f, Stmt: c}
	m.prog, m.progErr = nil, nil
	for i, old := range m.corrs {
		if old.key() == d.key() {
			m.corrs[i] = d
			return true
		}
	}
	m.corrs = append(m.corrs, d)
	return false
}

// Correlation is a rank correlation between two inputs: Spearman's
// coefficient Rho between inputs I and J (indices into Program.Inputs, or
// into Problem.Inputs for a problem's correlations).
type Correlation struct {
	I, J int
	Rho  float64
	// Pos is where the correlation was declared (zero for one built by hand).
	Pos syntax.Position

	decl *CorrDecl
}

// compileCorrelations checks the declared rank correlations and adds them to
// the program: both names must be inputs, different, and the coefficient a
// number strictly between -1 and 1; together they must be consistent (see
// checkConsistent).
func (c *compiler) compileCorrelations() {
	p := c.prog
	for _, d := range c.m.corrs {
		f, s := d.File, d.Stmt
		var idx [2]int
		ok := true
		for k, id := range s.Names {
			in, _ := p.Lookup(id.Name)
			switch {
			case in == nil && c.decls[id.Name] != nil && c.decls[id.Name].Formula != nil:
				c.errorf(f, id.Pos(), "%s is a formula: a rank correlation relates two inputs (a formula's spread follows from its inputs)", id.Name)
				ok = false
			case in == nil:
				var inputs []string
				for _, x := range p.Inputs {
					inputs = append(inputs, x.Name)
				}
				c.errorf(f, id.Pos(), "undefined input %s%s", id.Name, syntax.DidYouMean(id.Name, inputs))
				ok = false
			default:
				idx[k] = in.index
			}
		}
		if ok && idx[0] == idx[1] {
			c.errorf(f, s.Names[1].Pos(), "a rank correlation relates two different inputs, not %s with itself", s.Names[0].Name)
			ok = false
		}
		rho, vok := c.constant(f, s.Target, unit.One(), "the rank correlation of "+s.Names[0].Name+" and "+s.Names[1].Name)
		if vok && !(rho > -1 && rho < 1) {
			c.errorf(f, s.Target.Pos(), "a rank correlation lies strictly between -1 and 1, found %s", syntax.Brief(s.Target))
			vok = false
		}
		if ok && vok {
			p.Correlations = append(p.Correlations, Correlation{I: idx[0], J: idx[1], Rho: rho, Pos: f.Position(s.VerbPos), decl: d})
		}
	}
	if len(c.errs) == 0 {
		if err := checkConsistent(p.Inputs, p.Correlations); err != nil {
			c.errs = append(c.errs, err)
		}
	}
}

// problemCorrelations returns the correlations between inputs of pr, indexed
// into pr.Inputs.
func (p *Program) problemCorrelations(pr *Problem) []Correlation {
	if len(p.Correlations) == 0 {
		return nil
	}
	at := map[int]int{}
	for i, in := range pr.Inputs {
		at[in.index] = i
	}
	var out []Correlation
	for _, c := range p.Correlations {
		i, iok := at[c.I]
		j, jok := at[c.J]
		if iok && jok {
			c.I, c.J = i, j
			out = append(out, c)
		}
	}
	return out
}

// scoreCorrelation converts Spearman's rank correlation rho to the Pearson
// correlation of normal scores that has it:
//
//	r = 2 sin(π rho / 6)
//
// the inverse of rho = (6/π) asin(r/2) for a bivariate normal distribution
// (Pearson 1907; Kruskal 1958, eq. 5.5). Iman–Conover imposes r on the
// scores, so that the samples' rank correlation comes out near rho.
func scoreCorrelation(rho float64) float64 { return 2 * math.Sin(math.Pi*rho/6) }

// corrGroup is the set of inputs that take part in some correlation, and the
// target correlation matrix of their normal scores.
type corrGroup struct {
	members []int // input indices, ascending
	target  *mat.SymDense
}

func newCorrGroup(cs []Correlation) *corrGroup {
	var members []int
	for _, c := range cs {
		members = append(members, c.I, c.J)
	}
	slices.Sort(members)
	members = slices.Compact(members)
	g := &corrGroup{members: members, target: mat.NewSymDense(len(members), nil)}
	for i := range members {
		g.target.SetSym(i, i, 1)
	}
	for _, c := range cs {
		g.target.SetSym(g.pos(c.I), g.pos(c.J), scoreCorrelation(c.Rho))
	}
	return g
}

func (g *corrGroup) pos(input int) int {
	i, _ := slices.BinarySearch(g.members, input)
	return i
}

func posDef(m *mat.SymDense) bool {
	var ch mat.Cholesky
	return ch.Factorize(m)
}

// checkConsistent reports correlations that no joint distribution can have:
// the matrix of the correlations (of the normal scores they imply) must be
// positive definite. The error names the pair to change and the nearest
// value that makes the set consistent, for the pair that needs the smallest
// change (the others held). For one pair the consistent values form an
// interval; it is found on a grid of step 0.01 and its end refined by
// bisection.
func checkConsistent(inputs []*Input, cs []Correlation) *syntax.Error {
	if len(cs) == 0 {
		return nil
	}
	g := newCorrGroup(cs)
	if posDef(g.target) {
		return nil
	}
	best, bestRho, bestChange := -1, 0.0, math.Inf(1)
	if len(g.members) <= maxSuggestMembers {
		m := mat.NewSymDense(g.target.SymmetricDim(), nil)
		for k, c := range cs {
			i, j := g.pos(c.I), g.pos(c.J)
			m.CopySym(g.target)
			ok := func(rho float64) bool {
				m.SetSym(i, j, scoreCorrelation(rho))
				return posDef(m)
			}
			if rho, found := nearestConsistent(c.Rho, ok); found {
				if change := math.Abs(c.Rho - rho); change < bestChange {
					best, bestRho, bestChange = k, rho, change
				}
			}
		}
	}
	var names []string
	for _, m := range g.members {
		names = append(names, inputs[m].Name)
	}
	sort.Strings(names)
	msg := fmt.Sprintf("the rank correlations among %s cannot all hold at once (their matrix is not positive definite)", strings.Join(names, ", "))
	c := cs[len(cs)-1]
	if best >= 0 {
		c = cs[best]
		msg += fmt.Sprintf(": change this one to %.2f, the nearest value that fits the others, or weaken the others", bestRho)
	} else {
		msg += ": weaken several of them"
	}
	return corrError(c, msg)
}

// maxSuggestMembers bounds the inputs for which checkConsistent searches for
// a fix.
const maxSuggestMembers = 40

// nearestConsistent returns the value nearest rho, on a grid of 0.01
// strictly inside (-1, 1), for which ok holds.
func nearestConsistent(rho float64, ok func(float64) bool) (float64, bool) {
	best, found := 0.0, false
	for v := -99; v <= 99; v++ {
		r := float64(v) / 100
		if ok(r) && (!found || math.Abs(r-rho) < math.Abs(best-rho)) {
			best, found = r, true
		}
	}
	return best, found
}

func corrError(c Correlation, msg string) *syntax.Error {
	e := &syntax.Error{Pos: c.Pos, Msg: msg}
	if c.decl != nil {
		x := c.decl.Stmt.Target
		e.Pos = c.decl.File.Position(x.Pos())
		e.Source = c.decl.File.Line(e.Pos.Line)
	}
	return e
}
