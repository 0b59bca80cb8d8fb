package jupyter

import (
	"context"
	"reflect"
	"testing"
)

// exitHandler asks the front end to end the session when the cell is
// "exit", as a console expects of `exit` (jupyter_console reads the
// ask_exit payload of an ok execute_reply), and fails on "exitfail" after
// adding the payload.
type exitHandler struct{ *fakeHandler }

func (h exitHandler) Execute(ctx context.Context, code string, out Output, opts ExecOptions) (*Bundle, error) {
	switch code {
	case "exit", "exitfail":
		out.Payload(map[string]any{"source": "ask_exit", "keepkernel": false})
		if code == "exitfail" {
			return nil, &ExecError{Name: "ModelError", Value: "no"}
		}
		return nil, nil
	}
	return h.fakeHandler.Execute(ctx, code, out, opts)
}

func TestExecutePayload(t *testing.T) {
	tk := startKernel(t, exitHandler{newFake()}, nil)
	c := connect(t, tk)
	r, _ := c.execute("exit", nil)
	want := []any{map[string]any{"source": "ask_exit", "keepkernel": false}}
	if r.str("status") != "ok" || !reflect.DeepEqual(r.content["payload"], want) {
		t.Errorf("reply %v, want payload %v", r.content, want)
	}
	// A failed cell's reply carries no payload; the next cell's reply starts
	// afresh.
	r, _ = c.execute("exitfail", nil)
	if r.str("status") != "error" || !reflect.DeepEqual(r.content["payload"], []any{}) {
		t.Errorf("error reply %v", r.content)
	}
	r, _ = c.execute("print x", nil)
	if !reflect.DeepEqual(r.content["payload"], []any{}) {
		t.Errorf("next reply %v", r.content)
	}
}
