package tape

import (
	"strings"
	"testing"
)

func TestOpString(t *testing.T) {
	for op := OpAdd; op < opArg; op++ {
		if s := op.String(); s == "" || strings.HasPrefix(s, "op(") {
			t.Errorf("op %d has no name", op)
		}
	}
	if got := Op(250).String(); got != "op(250)" {
		t.Errorf("Op(250) = %q", got)
	}
	steps := map[Op]bool{OpFloor: true, OpCeil: true, OpRound: true, OpLt: true, OpLe: true, OpGt: true,
		OpGe: true, OpEq: true, OpNe: true, OpAnd: true, OpOr: true, OpNot: true, OpIf: true}
	for op := OpInvalid; op < numOps; op++ {
		if op.IsStep() != steps[op] {
			t.Errorf("%v: IsStep = %v", op, op.IsStep())
		}
	}
}
