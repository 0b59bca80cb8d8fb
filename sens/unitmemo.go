package sens

import (
	"sync"

	"github.com/nudge-dev/nudge/sens/unit"
)

// Units are chosen for display many times over in a large model (every
// product of two quantities, every partial derivative), and the same few
// pairs of units come back again and again: the choices are remembered, and
// the units a compilation hands out are interned, so that a node costs no
// unit arithmetic and no allocation once its pair has been seen.

// unitMemo remembers combinedUnit and unit.Simplest, for every goroutine.
var unitMemo struct {
	sync.Mutex
	combined map[unitPair]*unit.Unit
	simplest map[unit.Dim]unit.Unit
}

type unitPair struct {
	a, b unit.Unit
	mul  bool
}

// maxUnitMemo bounds each memo: a model with more distinct pairs than this
// works them out again.
const maxUnitMemo = 1 << 14

// combinedUnit is combineUnits, remembered.
func combinedUnit(a, b *unit.Unit, mul bool) *unit.Unit {
	k := unitPair{*a, *b, mul}
	unitMemo.Lock()
	u, ok := unitMemo.combined[k]
	unitMemo.Unlock()
	if ok {
		return u
	}
	u = combineUnits(a, b, mul)
	unitMemo.Lock()
	if unitMemo.combined == nil {
		unitMemo.combined = map[unitPair]*unit.Unit{}
	}
	if len(unitMemo.combined) < maxUnitMemo {
		unitMemo.combined[k] = u
	}
	unitMemo.Unlock()
	return u
}

// simplest is unit.Simplest, remembered.
func simplest(d unit.Dim) unit.Unit {
	unitMemo.Lock()
	u, ok := unitMemo.simplest[d]
	unitMemo.Unlock()
	if ok {
		return u
	}
	u = unit.Simplest(d)
	unitMemo.Lock()
	if unitMemo.simplest == nil {
		unitMemo.simplest = map[unit.Dim]unit.Unit{}
	}
	if len(unitMemo.simplest) < maxUnitMemo {
		unitMemo.simplest[d] = u
	}
	unitMemo.Unlock()
	return u
}

// intern returns the compilation's one copy of u; values that show in the
// same unit share it.
func (c *compiler) intern(u unit.Unit) *unit.Unit {
	if p, ok := c.units[u]; ok {
		return p
	}
	p := new(unit.Unit) // not &u, which would put every argument on the heap
	*p = u
	if c.units == nil {
		c.units = map[unit.Unit]*unit.Unit{}
	}
	c.units[u] = p
	return p
}
