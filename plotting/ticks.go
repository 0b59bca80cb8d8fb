package plotting

import (
	"github.com/nudge-dev/nudge/sens/unit"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// niceTicks places about N major ticks (5 when N is zero) at round values
// (1, 2, 2.5 or 5 times a power of ten) and labels them with Format
// (unit.Format without a unit when Format is nil). It draws no minor ticks.
//
// The step is the "nice number" closest to range/(N-1):
//
//	step = nice((max-min)/(N-1)),  nice(x) = the nearest of {1, 2, 2.5, 5, 10} x 10^floor(log10 x)
//
// References:
//   - Heckbert, P. S. (1990). Nice numbers for graph labels. In Graphics
//     Gems, pp. 61-63. Academic Press.
type niceTicks struct {
	N      int
	Format func(float64) string
}

var _ plot.Ticker = niceTicks{}

// Ticks implements plot.Ticker.
func (t niceTicks) Ticks(min, max float64) []plot.Tick {
	n := t.N
	if n <= 1 {
		n = 5
	}
	format := t.Format
	if format == nil {
		format = func(v float64) string { return unit.Format(v, "") }
	}
	if !(max > min) || math.IsInf(max-min, 0) {
		return []plot.Tick{{Value: min, Label: format(min)}}
	}
	step := niceStep((max - min) / float64(n-1))
	first := math.Ceil(min/step-1e-9) * step
	var ticks []plot.Tick
	for i := 0; ; i++ {
		v := first + float64(i)*step
		if v > max+step*1e-9 {
			break
		}
		// Snap to the step's grid to remove drift such as 0.30000000000000004.
		v = math.Round(v/step) * step
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		ticks = append(ticks, plot.Tick{Value: v, Label: format(v)})
		if i > 100 {
			break
		}
	}
	return ticks
}

// niceStep rounds x to the nearest of 1, 2, 2.5, 5 or 10 times a power of ten.
func niceStep(x float64) float64 {
	if x <= 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return 1
	}
	exp := math.Floor(math.Log10(x))
	f := x / math.Pow(10, exp)
	var nf float64
	switch {
	case f < 1.5:
		nf = 1
	case f < 2.25:
		nf = 2
	case f < 3.5:
		nf = 2.5
	case f < 7.5:
		nf = 5
	default:
		nf = 10
	}
	return nf * math.Pow(10, exp)
}

// pctTicks labels ticks as signed percentages: "-20%", "0%", "+20%".
func pctTicks() niceTicks {
	return niceTicks{Format: func(v float64) string { return unit.Signed(v, "%") }}
}

// nameTicks puts one label per row of a horizontal bar chart, the first row
// at the top: row i of n sits at y = n-1-i.
func nameTicks(names []string) plot.ConstantTicks {
	n := len(names)
	ticks := make(plot.ConstantTicks, n)
	for i, name := range names {
		ticks[i] = plot.Tick{Value: float64(n - 1 - i), Label: name}
	}
	return ticks
}

// fitTicks gives the plot's axes as many nice ticks (up to 6 along x and 7
// along y) as fit on canvas c without their labels crowding each other. Axes
// whose Tick.Marker is not a niceTicks are left alone.
func fitTicks(p *plot.Plot, c draw.Canvas) {
	dc := p.DataCanvas(c)
	if t, ok := p.X.Tick.Marker.(niceTicks); ok {
		length := dc.Max.X - dc.Min.X
		for n := 6; n >= 2; n-- {
			t.N = n
			ticks := t.Ticks(p.X.Min, p.X.Max)
			var widest vg.Length
			for _, tk := range ticks {
				widest = max(widest, p.X.Tick.Label.Width(tk.Label))
			}
			if n == 2 || vg.Length(len(ticks))*(widest+p.X.Tick.Label.Width("  ")) <= length {
				break
			}
		}
		p.X.Tick.Marker = t
	}
	if t, ok := p.Y.Tick.Marker.(niceTicks); ok {
		length := dc.Max.Y - dc.Min.Y
		h := p.Y.Tick.Label.Height("0")
		for n := 7; n >= 2; n-- {
			t.N = n
			if n == 2 || vg.Length(len(t.Ticks(p.Y.Min, p.Y.Max)))*h*2.5 <= length {
				break
			}
		}
		p.Y.Tick.Marker = t
	}
}

// unlabeledTicks keeps another ticker's positions but drops the labels,
// for an axis that shares its values with one drawn elsewhere.
type unlabeledTicks struct{ plot.Ticker }

// Ticks implements plot.Ticker.
func (u unlabeledTicks) Ticks(min, max float64) []plot.Tick {
	ts := u.Ticker.Ticks(min, max)
	for i := range ts {
		ts[i].Label = ""
	}
	return ts
}
