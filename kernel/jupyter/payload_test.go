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

// headlineHandler fails with an error whose first traceback line is its
// headline.
type headlineHandler struct{ *fakeHandler }

func (h headlineHandler) Execute(ctx context.Context, code string, out Output, opts ExecOptions) (*Bundle, error) {
	return nil, &ExecError{Name: "ModelError", Value: "v", Traceback: []string{"cell[1]:1:5: undefined: x", "y = x", "    ^"}, Headline: true}
}

// An error's headline is bold red in the error message and the reply, the
// rest of the traceback as it was.
func TestErrorHeadline(t *testing.T) {
	tk := startKernel(t, headlineHandler{newFake()}, nil)
	c := connect(t, tk)
	r, io := c.execute("x", nil)
	want := []any{"\x1b[1;31mcell[1]:1:5: undefined: x\x1b[0m", "y = x", "    ^"}
	if !reflect.DeepEqual(r.content["traceback"], want) {
		t.Errorf("reply traceback %q, want %q", r.content["traceback"], want)
	}
	errs := 0
	for _, m := range io {
		if m.typ() == "error" {
			errs++
			if !reflect.DeepEqual(m.content["traceback"], want) {
				t.Errorf("error traceback %q", m.content["traceback"])
			}
		}
	}
	if errs != 1 {
		t.Errorf("%d error messages", errs)
	}
}
