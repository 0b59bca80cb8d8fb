package sens

import (
	"errors"
	"fmt"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/unit"
)

// ExchangeRate is an exchange rate the model states, "exchange EUR = 1.08 [$]":
// one unit of Code is worth Rate units of In. With it, amounts in the two
// currencies add up and compare; without it they never mix. Each value keeps
// the unit it was written in: a formula written in EUR is shown in EUR, and a
// partial derivative per an input in EUR/kg is per EUR/kg. A rate is a
// constant: to study its effect, make it an input in [$/EUR] and multiply.
type ExchangeRate struct {
	Kind     string          `json:"kind"` // "exchange"
	Code     string          `json:"code"`
	Rate     float64         `json:"rate"`
	In       string          `json:"in"`
	Replaced bool            `json:"replaced"`
	Pos      syntax.Position `json:"-"`
}

// DefineExchange checks the exchange command c from file f and adds its
// rate, or replaces the rate of that currency. The rate must be a positive
// constant amount of another currency ("1.08 [$]", "0.93 [EUR]"); a rate that
// would close a cycle (EUR in $, $ in EUR) is an error. Errors name the line
// and column.
func (m *Model) DefineExchange(f *syntax.File, c *syntax.CommandStmt) (*ExchangeRate, error) {
	a := c.Assigns[0]
	var errs syntax.ErrorList
	code := a.Name.Name
	if _, ok := unit.Parse(code); ok != nil || !isCurrencyCode(code) {
		errs.Add(f, a.Name.Pos(), code+" is not a currency: write an ISO 4217 code, as in exchange EUR = 1.08 [$]")
		return nil, errs
	}
	sc := newScratchCompiler()
	sc.what = "the rate of " + code
	v := sc.expr(f, a.Value, true)
	if v.bad {
		return nil, sc.errs
	}
	in, ok := v.dim.Currency()
	if !v.konst || v.boolean || !ok {
		errs.Add(f, a.Value.Pos(), fmt.Sprintf("the rate of %s must be a constant amount of another currency, as in exchange %s = 1.08 [$]", code, code))
		return nil, errs
	}
	r := &ExchangeRate{Kind: "exchange", Code: code, Rate: v.c, In: in, Pos: f.Position(c.VerbPos)}
	trial := m.Clone()
	_, r.Replaced = trial.rates[code]
	trial.addRate(r)
	if _, err := trial.exchangeRates(); err != nil {
		errs.Add(f, a.Value.Pos(), err.Error())
		return nil, errs
	}
	m.addRate(r)
	return r, nil
}

func isCurrencyCode(code string) bool {
	u, err := unit.Parse(code)
	if err != nil || u.Factor != 1 {
		return false
	}
	_, ok := u.Dim.Currency()
	return ok
}

func (m *Model) addRate(r *ExchangeRate) {
	if _, ok := m.rates[r.Code]; !ok {
		m.rateOrder = append(m.rateOrder, r.Code)
	}
	m.rates[r.Code] = r
	m.prog, m.progErr = nil, nil
}

// ExchangeRates returns the rates the model states, in the order first
// stated.
func (m *Model) ExchangeRates() []*ExchangeRate {
	out := make([]*ExchangeRate, len(m.rateOrder))
	for i, c := range m.rateOrder {
		out[i] = m.rates[c]
	}
	return out
}

// exchangeRates builds the rates of the model for the unit package.
func (m *Model) exchangeRates() (*unit.Rates, error) {
	if len(m.rateOrder) == 0 {
		return nil, nil
	}
	r := unit.NewRates()
	for _, c := range m.rateOrder {
		x := m.rates[c]
		if err := r.Set(x.Code, x.Rate, x.In); err != nil {
			return nil, err
		}
	}
	return r, nil
}

// exchangeRates gives the compiler the model's rates; a bad one (which
// DefineExchange refuses) is an error at its line.
func (c *compiler) exchangeRates() {
	r, err := c.m.exchangeRates()
	if err != nil {
		for _, x := range c.m.ExchangeRates() {
			c.errs = append(c.errs, &syntax.Error{Pos: x.Pos, Msg: err.Error()})
			break
		}
		return
	}
	c.rates = r
	c.prog.rates = r
	c.prog.Rates = c.m.ExchangeRates()
}

// rateHint suggests stating an exchange rate when a and b are two different
// currencies.
func rateHint(a, b unit.Dim) string {
	if x, y, ok := unit.CurrencyPair(a, b); ok {
		code, in := codeName(x, y)
		return fmt.Sprintf(": state an exchange rate to mix them, e.g. exchange %s = 1.1 [%s]", code, in)
	}
	return ""
}

// codeName orders two currencies for a rate's example: a code rated in "$"
// when one of them is "$".
func codeName(x, y string) (string, string) {
	if x == "$" {
		return y, x
	}
	return x, y
}

// Constant is Constant (the package function) under the exchange rates of
// the program the problem was built from, so a target written in $ reads
// against an output in EUR once a rate is stated.
func (p *Problem) Constant(f *syntax.File, x syntax.Expr, want, what string) (float64, error) {
	var r *unit.Rates
	if p.prog != nil {
		r = p.prog.rates
	}
	return constantIn(r, f, x, want, what)
}

// appendErr adds err, a list or a single error, to errs at c's position.
func appendErr(errs syntax.ErrorList, f *syntax.File, c *syntax.CommandStmt, err error) syntax.ErrorList {
	var el syntax.ErrorList
	if errors.As(err, &el) {
		return append(errs, el...)
	}
	errs.Add(f, c.Pos(), err.Error())
	return errs
}
