package sens

import (
	"fmt"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// rollupModel is a bid rolled up from n line items (quantity times rate), in
// subtotals of 100, a total, and a chain of chain formulas on the total.
func rollupModel(n, chain int) string {
	var b strings.Builder
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "input q%d = %d (±10%%)\ninput r%d = %d [$]\nitem%d = q%d * r%d\n", i, 1+i%50, i, 10+i%900, i, i, i)
	}
	subs := (n + 99) / 100
	for s := 0; s < subs; s++ {
		fmt.Fprintf(&b, "sub%d = item%d", s, s*100)
		for i := s*100 + 1; i < min(n, s*100+100); i++ {
			fmt.Fprintf(&b, " + item%d", i)
		}
		b.WriteByte('\n')
	}
	b.WriteString("total = sub0")
	for s := 1; s < subs; s++ {
		fmt.Fprintf(&b, " + sub%d", s)
	}
	b.WriteString(" [$]\ninput g = 1.01\nc0 = total\n")
	for i := 1; i < chain; i++ {
		fmt.Fprintf(&b, "c%d = c%d * g\n", i, i-1)
	}
	return b.String()
}

func benchmarkCompile(b *testing.B, n, chain int) {
	src := []byte(rollupModel(n, chain))
	f, stmts, err := syntax.Parse("bid", src)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		m := NewModel()
		for _, s := range stmts {
			m.Define(f, s)
		}
		if _, err := m.Compile(); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkCompileSmall(b *testing.B)  { benchmarkCompile(b, 100, 100) }
func BenchmarkCompileMedium(b *testing.B) { benchmarkCompile(b, 1000, 1000) }
func BenchmarkCompileLarge(b *testing.B)  { benchmarkCompile(b, 10000, 3000) }

// TestDepsOfSubOutput checks that a sub-output's problem holds only the inputs
// it depends on.
func TestDepsOfSubOutput(t *testing.T) {
	p := compileSrc(t, rollupModel(300, 5))
	pr, err := p.Problem("item7")
	if err != nil {
		t.Fatal(err)
	}
	if len(pr.Inputs) != 2 || pr.Inputs[0].Name != "q7" || pr.Inputs[1].Name != "r7" {
		t.Fatalf("inputs of item7: %d", len(pr.Inputs))
	}
	pr, _ = p.Problem("c4")
	if len(pr.Inputs) != 601 {
		t.Errorf("c4 depends on %d inputs, want 601", len(pr.Inputs))
	}
}

// BenchmarkCompileScale compiles the scale model of `nudge bench scale`
// (10^4 lines, with if): products of quantities in several units.
func BenchmarkCompileScale(b *testing.B) {
	src := tapebench.ScaleModel(10_000, true, 1)
	f, stmts, err := syntax.Parse("bid", src)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		m := NewModel()
		for _, s := range stmts {
			m.Define(f, s)
		}
		if _, err := m.Compile(); err != nil {
			b.Fatal(err)
		}
	}
}

// scaleLines is the size of the scale model of BenchmarkScaleParse and
// BenchmarkScaleCompile: 100,000 lines, or NUDGE_SCALE_LINES.
func scaleLines(b *testing.B) int {
	if s := os.Getenv("NUDGE_SCALE_LINES"); s != "" {
		n, err := strconv.Atoi(s)
		if err != nil || n < 3 {
			b.Fatalf("NUDGE_SCALE_LINES=%q: want a number of lines, at least 3", s)
		}
		return n
	}
	return 100_000
}

// BenchmarkScaleParse and BenchmarkScaleCompile time the two steps of
// `nudge bench scale` on the scale model (without if), for the ratio
// compile / parse from one run:
//
//	go test ./sens/ -run '^$' -bench 'Scale(Parse|Compile)$' -benchtime=3x
func BenchmarkScaleParse(b *testing.B) {
	src := tapebench.ScaleModel(scaleLines(b), false, 1)
	for b.Loop() {
		if _, _, err := syntax.Parse("bid", src); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkScaleCompile declares the parsed model's statements and
// compiles it, as `nudge bench scale` times "compile".
func BenchmarkScaleCompile(b *testing.B) {
	f, stmts, err := syntax.Parse("bid", tapebench.ScaleModel(scaleLines(b), false, 1))
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		m := NewModel()
		for _, s := range stmts {
			m.Define(f, s)
		}
		if _, err := m.Compile(); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkScaleRatio parses and compiles the scale model (without if)
// one after the other in each round, for the ratio compile / parse from
// rounds that the machine's load affects alike (ratio: of the times;
// cpu-ratio: of the process's CPU time, the collector's included):
//
//	go test ./sens/ -run '^$' -bench 'ScaleRatio$' -benchtime=5x
func BenchmarkScaleRatio(b *testing.B) {
	src := tapebench.ScaleModel(scaleLines(b), false, 1)
	f, stmts, err := syntax.Parse("bid", src)
	if err != nil {
		b.Fatal(err)
	}
	compile := func() error {
		m := NewModel()
		for _, s := range stmts {
			m.Define(f, s)
		}
		_, err := m.Compile()
		return err
	}
	parse := func() error {
		_, _, err := syntax.Parse("bid", src)
		return err
	}
	cpuPair(b, 1, "compile", "parse", compile, parse)
}
