package notebook

import (
	"bytes"
	"os"
	"strings"
	"testing"
)

// TestPyRepr checks numbers against Python's repr of the same floats
// (CPython 3.11, `repr(float(x))`, from memory of its documented rules:
// shortest round-trip digits, scientific below 1e-4 and from 1e16 on).
func TestPyRepr(t *testing.T) {
	for _, tc := range []struct {
		in   float64
		want string
	}{
		{1, "1.0"},
		{0.1, "0.1"},
		{0.0001, "0.0001"},
		{0.00001, "1e-05"},
		{1.6625629107616717e-05, "1.6625629107616717e-05"},
		{123.456, "123.456"},
		{1e15, "1000000000000000.0"},
		{1e16, "1e+16"},
		{123456789012345678, "1.2345678901234568e+17"},
		{-2.5e-7, "-2.5e-07"},
		{1e100, "1e+100"},
		{0, "0.0"},
	} {
		if got := pyRepr(tc.in); got != tc.want {
			t.Errorf("pyRepr(%v) = %s, want %s", tc.in, got, tc.want)
		}
	}
}

// TestRoundTrip: notebooks that nbformat wrote (the bundled ones but the
// tour, which was written by hand with other key orders) read and write
// back byte for byte.
func TestRoundTrip(t *testing.T) {
	for _, name := range []string{"housing", "energy", "steel_bid"} {
		data, err := os.ReadFile("../../notebooks/" + name + ".ipynb")
		if err != nil {
			t.Fatal(err)
		}
		nb, err := Read(data)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		out, err := nb.Marshal()
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(out, data) {
			t.Errorf("%s: written back differently", name)
		}
	}
}

func TestReadErrors(t *testing.T) {
	for in, want := range map[string]string{
		`{"nbformat": 3, "cells": []}`: "nbformat 3 is not supported",
		`{"cells": []}`:                "no nbformat version",
		`[1, 2]`:                       "not a notebook",
		`{"nbformat": 4, "cells": [{"cell_type": "graph"}]}`:                                      "cell 1: unknown cell type \"graph\"",
		`{"nbformat": 4, "cells": [{"cell_type": "code", "source": 7}]}`:                          "cell 1: source: text is a number",
		`{"nbformat": 4, "cells": [{"cell_type": "code", "source": [1]}]}`:                        "a list of lines holds",
		`{"nbformat": 4, "cells": [{"cell_type": "code", "outputs": [{"output_type": "beep"}]}]}`: "output 1: unknown output type",
	} {
		_, err := Read([]byte(in))
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: %v, want %q", in, err, want)
		}
	}
}

// FuzzRead: any bytes either fail to read or read into a notebook that
// writes and reads back to the same notebook.
func FuzzRead(f *testing.F) {
	for _, name := range []string{"housing", "tour"} {
		if data, err := os.ReadFile("../../notebooks/" + name + ".ipynb"); err == nil {
			f.Add(data)
		}
	}
	f.Add([]byte(`{"nbformat": 4, "nbformat_minor": 5, "metadata": {}, "cells": [{"cell_type": "code", "source": "x\r\ny", "outputs": [{"output_type": "stream", "name": "stdout", "text": ["a\n", "b"]}, {"output_type": "execute_result", "data": {"text/plain": "1", "application/x+json": {"a": 1.5e-9}}, "execution_count": 3}]}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		nb, err := Read(data)
		if err != nil {
			return
		}
		out, err := nb.Marshal()
		if err != nil {
			return // a value JSON cannot hold, such as an invalid number
		}
		nb2, err := Read(out)
		if err != nil {
			t.Fatalf("cannot read what was written: %v\n%s", err, out)
		}
		out2, err := nb2.Marshal()
		if err != nil || !bytes.Equal(out, out2) {
			t.Fatalf("a second write differs: %v", err)
		}
	})
}
