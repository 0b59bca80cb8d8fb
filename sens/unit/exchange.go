package unit

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// Rates is a set of exchange rates that a model states: each maps one unit of a currency to an
// amount of another, "1 EUR is worth 1.08 $". Without a rate, currencies never mix; with one,
// a unit in the rated currency is re-expressed in the currency it is rated in (Unit.In), so EUR
// and $ add up while each value keeps the unit it was written in. Rates chain (GBP in EUR, EUR
// in $) but may not form a cycle. The zero Rates is not usable; use NewRates. A nil *Rates has
// no rates.
type Rates struct {
	direct map[string]rate // code -> its rate as stated
}

type rate struct {
	per float64 // one unit of the code is worth per units of in
	in  string
}

// NewRates returns an empty set of rates.
func NewRates() *Rates { return &Rates{direct: map[string]rate{}} }

// Set states that one unit of the currency code is worth per units of the currency in: both
// "$", "€", "£" or ISO 4217 codes, different from each other; per is positive and finite. A
// later Set of the same code replaces the earlier one. It fails, leaving r as it was, on a bad
// code or rate and on a rate that would close a cycle.
func (r *Rates) Set(code string, per float64, in string) error {
	c, ok := currencyCode(code)
	if !ok {
		return fmt.Errorf("%s is not a currency: write an ISO 4217 code such as EUR", code)
	}
	to, ok := currencyCode(in)
	if !ok {
		return fmt.Errorf("%s is not a currency", in)
	}
	if c == to {
		return fmt.Errorf("a rate of %s in %s would be 1: give a rate in another currency", code, in)
	}
	if !(per > 0) || math.IsInf(per, 0) {
		return fmt.Errorf("the rate of %s must be a positive amount of %s, found %s", code, in, Format(per, ""))
	}
	old, had := r.direct[c]
	r.direct[c] = rate{per: per, in: to}
	if path, ok := r.cycle(c); ok {
		if had {
			r.direct[c] = old
		} else {
			delete(r.direct, c)
		}
		return fmt.Errorf("exchange rates form a cycle: %s", strings.Join(path, " -> "))
	}
	return nil
}

// cycle reports the chain of rates from code back to itself, if there is one.
func (r *Rates) cycle(code string) ([]string, bool) {
	path := []string{code}
	for c := code; ; {
		rt, ok := r.direct[c]
		if !ok {
			return nil, false
		}
		path = append(path, rt.in)
		if rt.in == code {
			return path, true
		}
		c = rt.in
		if len(path) > len(r.direct)+1 {
			return nil, false
		}
	}
}

// Resolve returns the currency code is finally expressed in and what one unit of code is worth
// there: ("$", 1.08) for EUR rated at 1.08 $, ("$", 1.17 × 1.08) for GBP rated at 1.17 EUR.
// A currency without a rate resolves to itself at 1.
func (r *Rates) Resolve(code string) (string, float64) {
	f := 1.0
	if r == nil {
		return code, f
	}
	for i := 0; i <= len(r.direct); i++ {
		rt, ok := r.direct[code]
		if !ok {
			break
		}
		f *= rt.per
		code = rt.in
	}
	return code, f
}

// Len returns the number of rates stated.
func (r *Rates) Len() int {
	if r == nil {
		return 0
	}
	return len(r.direct)
}

// Codes returns the currencies that have a rate, sorted.
func (r *Rates) Codes() []string {
	if r == nil {
		return nil
	}
	out := make([]string, 0, len(r.direct))
	for c := range r.direct {
		out = append(out, c)
	}
	sort.Strings(out)
	return out
}

// In re-expresses u under the rates r: each currency of u's dimension that has a rate is
// replaced by the currency it resolves to, and the factor takes the rate,
//
//	Factor' = Factor × Π rate_c^e_c
//
// for each rated currency c with exponent e_c. The text stays as written ("EUR/h"), so values
// are shown in the user's units; products and quotients of u (Mul, Div, Pow) keep the rates.
// In with nil or empty rates returns u unchanged.
func (u Unit) In(r *Rates) Unit {
	if r.Len() == 0 {
		return u
	}
	u.rates = r
	if u.Dim.cur() == "" {
		return u
	}
	cs := currencies(u.Dim.cur())
	changed := false
	for _, code := range sortedCodes(cs) {
		to, f := r.Resolve(code)
		if to == code {
			continue
		}
		e := cs[code]
		u.Factor *= math.Pow(f, float64(e))
		cs[code] -= e
		cs[to] += e
		changed = true
	}
	if changed {
		u.Dim = makeDim(u.Dim.si(), encodeCurrencies(cs))
	}
	return u
}

// Rates returns the rates u was re-expressed under (see In), or nil.
func (u Unit) Rates() *Rates { return u.rates }

// CurrencyPair reports the two currencies when a and b are different single currencies, for
// messages that suggest a rate.
func CurrencyPair(a, b Dim) (string, string, bool) {
	x, ok1 := a.singleCurrency()
	y, ok2 := b.singleCurrency()
	return x, y, ok1 && ok2 && x != y
}
