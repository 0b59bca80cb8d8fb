package main

import (
	"fmt"
	"io"
	"strconv"
	"strings"
	"testing"
	"text/tabwriter"

	"github.com/nudge-dev/nudge/sens/tape"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

func benchCmd(args []string, stdout, stderr io.Writer) int {
	if len(args) > 0 {
		if isHelp(args[0]) && len(args) == 1 {
			fmt.Fprintln(stdout, "usage: nudge bench [model | scale] [--lines N] [--if] [--seed S] [--repeat R]\n  with no argument, runs the engine's benchmarks (about half a minute) and prints each ratio against its target, marked met or missed;\n  model prints the generated scale model; scale times parse, compile, evaluation and analyses on it")
			return 0
		}
		switch args[0] {
		case "model":
			return benchModel(args[1:], stdout, stderr)
		case "scale":
			return benchScale(args[1:], stdout, stderr)
		}
		fmt.Fprintln(stderr, "usage: nudge bench [model | scale] [--lines N] [--if] [--seed S] [--repeat R]")
		return 2
	}
	if err := runBench(stdout); err != nil {
		fmt.Fprintln(stderr, "nudge bench:", err)
		return 1
	}
	return 0
}

// runBench runs the engine's benchmarks (package tapebench, the bodies the
// benchmarks of sens/tape run too) with testing.Benchmark and prints a table
// of ratios to w: the tape interpreter against the same cost model written in
// Go (scalar and batched; each pair interleaved so that other load on the
// machine affects both sides alike), the gradient (forward and reverse passes)
// against the forward pass on generated models of 1e3 to 1e6 nodes, a
// Hessian-vector product against a gradient on 1e5 nodes, reverse
// mode against gonum's central differences on 10,000 inputs, the tape's
// bytes per node, and the line-item benchmarks on 100,000 lines
// (benchLineItems). It takes about a minute.
func runBench(w io.Writer) error {
	fmt.Fprintln(w, "nudge bench: the evaluation engine against hand-written Go and finite differences")
	fmt.Fprintln(w, "(each pair runs interleaved in short chunks; times and ratios are medians over the chunks)")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "comparison\ttape\treference\tratio\ttarget\t")
	row := func(name string, r testing.BenchmarkResult, a, ref string, target string) {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%.2f\t%s\t%s\n", name,
			fmtNs(r.Extra[a+"-ns"]), fmtNs(r.Extra[ref+"-ns"]), r.Extra["ratio"], target, verdict(r.Extra["ratio"], target))
	}
	var failed error
	check := func(err error) {
		if err != nil && failed == nil {
			failed = err
		}
	}

	for _, arith := range []bool{false, true} {
		t := tapebench.CostModel(arith)
		goFn, name, scalarTarget, batchTarget := tapebench.CostModelGo, "cost model", "<= 2.5", "<= 1.2"
		if arith {
			goFn, name, scalarTarget, batchTarget = tapebench.ArithModelGo, "arithmetic-only model", "<= 6", "<= 1.6"
		}
		x := tapebench.CostBaseline()
		check(t.Forward(x))
		r := testing.Benchmark(func(b *testing.B) { tapebench.ForwardVsGo(b, t, goFn, x) })
		row(fmt.Sprintf("%s (%d nodes): forward vs Go", name, t.Len()), r, "tape", "go", scalarTarget)
		xs := tapebench.Samples(tapebench.BatchN, 7)
		vec := tape.SetVectorKernels(false) // pure Go first
		r = testing.Benchmark(func(b *testing.B) { tapebench.BatchVsGo(b, t, goFn, xs, tapebench.BatchN) })
		row(fmt.Sprintf("%s: batched forward (columns) vs Go loop, per sample, pure Go", name), r, "tape", "go", batchTarget)
		tape.SetVectorKernels(vec)
		if !arith {
			continue
		}
		if vec {
			r = testing.Benchmark(func(b *testing.B) { tapebench.BatchVsGo(b, t, goFn, xs, tapebench.BatchN) })
			row(fmt.Sprintf("%s: the same with vector kernels", name), r, "tape", "go", "<= 1.2")
		} else {
			fmt.Fprintf(tw, "%s: the same with vector kernels\t\t\t-\t<= 1.2\tnot in this build (GOEXPERIMENT=simd go build) or CPU (AVX2)\n", name)
		}
	}

	var bytesPerNode float64
	for _, sz := range tapebench.Sizes {
		t, x := tapebench.GenModel(sz.Nodes, sz.Inputs, 1)
		check(t.Forward(x))
		r := testing.Benchmark(func(b *testing.B) { tapebench.GradientVsForward(b, t, x) })
		target := "<= 3"
		if sz.Nodes >= 1_000_000 {
			target = "<= 2.2"
		}
		row(fmt.Sprintf("gradient vs forward, %d nodes, %d inputs", t.Len(), t.NumInputs()), r, "gradient", "forward", target)
		bytesPerNode = max(bytesPerNode, float64(t.Bytes())/float64(t.Len()))
	}

	// A Hessian-vector product (interactions) against a gradient, 1e5 nodes.
	ht, hx := tapebench.GenModel(tapebench.Sizes[1].Nodes, tapebench.Sizes[1].Inputs, 1)
	r := testing.Benchmark(func(b *testing.B) { tapebench.HVPVsGradient(b, ht, hx) })
	row(fmt.Sprintf("Hessian-vector product vs gradient, %d nodes", ht.Len()), r, "hvp", "gradient", "<= 4")

	t, x := tapebench.GenModel(30_000, 10_000, 3)
	check(t.Forward(x))
	r = testing.Benchmark(func(b *testing.B) { tapebench.ReverseVsFD(b, t, x) })
	fmt.Fprintf(tw, "gradient vs gonum fd.Gradient, %d inputs (fd: 20001 evaluations, run once)\t%s\t%s\t1/%.0f\t-\t\n",
		t.NumInputs(), fmtNs(r.Extra["reverse-ms"]*1e6), fmtNs(r.Extra["fd-ms"]*1e6), r.Extra["speedup"])
	fmt.Fprintf(tw, "tape bytes per node (largest model)\t%.1f\t\t\t<= 32\t%s\n", bytesPerNode, verdict(bytesPerNode, "<= 32"))
	check(benchLineItems(row, tw))
	if err := tw.Flush(); err != nil {
		return err
	}
	return failed
}

// fmtNs formats a time given in nanoseconds.
func fmtNs(ns float64) string {
	switch {
	case ns < 1e3:
		return fmt.Sprintf("%.1f ns", ns)
	case ns < 1e6:
		return fmt.Sprintf("%.1f µs", ns/1e3)
	case ns < 1e9:
		return fmt.Sprintf("%.1f ms", ns/1e6)
	}
	return fmt.Sprintf("%.2f s", ns/1e9)
}

// verdict marks a measured value against a target written "<= 2.5": "met"
// or "MISSED"; "" for a row without a target ("none", "-").
func verdict(v float64, target string) string {
	t, ok := strings.CutPrefix(strings.TrimSpace(target), "<=")
	if !ok {
		return ""
	}
	limit, err := strconv.ParseFloat(strings.TrimSpace(t), 64)
	if err != nil {
		return ""
	}
	if v <= limit {
		return "met"
	}
	return "MISSED"
}
