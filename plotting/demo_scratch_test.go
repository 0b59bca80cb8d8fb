package plotting

import (
	"fmt"
	"os"
	"testing"
)

func TestDemoRender(t *testing.T) {
	if os.Getenv("DEMO") == "" {
		t.Skip()
	}
	tor := &Tornado{Output: "total", Unit: "$", Baseline: 1234567,
		Bars: []Bar{
			{Name: "units", Low: 800, High: 1300, OutLow: 1000000, OutHigh: 1580000, Min: 1000000, Max: 1580000},
			{Name: "hours", Low: 1.2, High: 1.8, InputUnit: "h", OutLow: 1150000, OutHigh: 1320000},
			{Name: "steel price per kilogram of the grade used in the housing", Low: 0.8, High: 1.2, InputUnit: "$/kg", OutLow: 1300000, OutHigh: 1180000, DefaultRange: true},
			{Name: "mass", Low: 11.4, High: 12.96, InputUnit: "kg", OutLow: 1260000, OutHigh: 1290000, Min: 1230000, Max: 1290000, NonMonotone: true},
			{Name: "tooling", Low: 45000, High: 55000, InputUnit: "$", OutLow: 1229567, OutHigh: 1239567},
		},
		Rest: &Bar{Name: "12 others", OutLow: 1230000, OutHigh: 1238000},
	}
	write(t, "tornado", tor)
	fmt.Print(tor.Text(100))
	fmt.Print(tor.Text(60))
}

func write(t *testing.T, name string, c Chart) {
	f, _ := os.Create("/tmp/demo/" + name + ".png")
	if err := c.WritePNG(f, nil); err != nil {
		t.Fatal(err)
	}
	f.Close()
	f, _ = os.Create("/tmp/demo/" + name + ".svg")
	if err := c.WriteSVG(f, nil); err != nil {
		t.Fatal(err)
	}
	f.Close()
}

func TestDemoZoom(t *testing.T) {
	if os.Getenv("DEMO") == "" {
		t.Skip()
	}
	tor := &Tornado{Output: "total", Unit: "$", Baseline: 1234567,
		Bars: []Bar{
			{Name: "units", Low: 800, High: 1300, OutLow: 1000000, OutHigh: 1580000, Min: 1000000, Max: 1580000},
			{Name: "mass", Low: 11.4, High: 12.96, InputUnit: "kg", OutLow: 1260000, OutHigh: 1290000, Min: 1230000, Max: 1290000, NonMonotone: true},
		},
	}
	f, _ := os.Create("/tmp/demo/zoom.png")
	tor.WritePNG(f, &Options{Width: 8 * 72 / 2.54, DPI: 300})
	f.Close()
}

func TestDemoSpider(t *testing.T) {
	if os.Getenv("DEMO") == "" {
		t.Skip()
	}
	pct := []float64{-30, -20, -10, 0, 10, 20, 30}
	mk := func(f func(p float64) float64) []float64 {
		var o []float64
		for _, p := range pct {
			o = append(o, f(p))
		}
		return o
	}
	s := &Spider{Output: "total", Unit: "$", Baseline: 1234567, Lines: []SpiderLine{
		{Name: "units", Pct: pct, Out: mk(func(p float64) float64 { return 1234567 + 11000*p })},
		{Name: "hours", Pct: pct, Out: mk(func(p float64) float64 { return 1234567 + 4000*p })},
		{Name: "steel", Pct: pct, Out: mk(func(p float64) float64 { return 1234567 - 3000*p })},
		{Name: "mass", Pct: pct, Out: mk(func(p float64) float64 { return 1234567 + 60*p*p })},
		{Name: "tooling", Pct: pct, Out: mk(func(p float64) float64 { return 1234567 + 500*p })},
		{Name: "rate", Pct: pct, Out: mk(func(p float64) float64 { return 1234567 + 2000*p })},
		{Name: "scrap rate", Pct: pct, Out: mk(func(p float64) float64 { return 1234567 + 7000*p })},
	}}
	write(t, "spider", s)
	fmt.Print(s.Text(80))
}

func TestDemoSweep(t *testing.T) {
	if os.Getenv("DEMO") == "" {
		t.Skip()
	}
	var x, y []float64
	for r := 40.0; r <= 80; r += 2 {
		x = append(x, r)
		y = append(y, 90000+1500*r+8*(r-60)*(r-60))
	}
	tg := 185000.0
	s := &Sweep{Output: "total", Unit: "$", Input: "rate", InputUnit: "$/h", X: x, Y: y, BaselineInput: 60, Baseline: 180000, Target: &tg}
	write(t, "sweep", s)
	fmt.Print(s.Text(80))
}

func TestDemoHeat(t *testing.T) {
	if os.Getenv("DEMO") == "" {
		t.Skip()
	}
	var xs, ys []float64
	for r := 40.0; r <= 80; r += 1 {
		xs = append(xs, r)
	}
	for hr := 1.0; hr <= 2.0001; hr += 0.025 {
		ys = append(ys, hr)
	}
	z := make([][]float64, len(ys))
	for j, hh := range ys {
		z[j] = make([]float64, len(xs))
		for i, r := range xs {
			z[j][i] = 1000 * (12*0.9 + hh*r) + 50000
		}
	}
	tg := 160000.0
	h := &HeatMap{Output: "total", Unit: "$", XName: "rate", XUnit: "$/h", YName: "hours", YUnit: "h", X: xs, Y: ys, Z: z, BaselineX: 60, BaselineY: 1.5, Target: &tg}
	write(t, "heat", h)
	fmt.Print(h.Text(80))
}

func TestDemoDist(t *testing.T) {
	if os.Getenv("DEMO") == "" {
		t.Skip()
	}
	var xs []float64
	s := uint64(7)
	for i := 0; i < 20000; i++ {
		sum := 0.0
		for k := 0; k < 4; k++ {
			s = s*6364136223846793005 + 1442695040888963407
			sum += float64(s>>11) / (1 << 53)
		}
		xs = append(xs, 1000000+200000*sum*sum/4)
	}
	d := &Distribution{Output: "total", Unit: "$", Samples: xs, Markers: []Marker{{"P10", 1080000}, {"P50", 1200000}, {"mean", 1210000}, {"P90", 1380000}}}
	write(t, "dist", d)
	fmt.Print(d.Text(80))
}

func TestDemoIdx(t *testing.T) {
	if os.Getenv("DEMO") == "" {
		t.Skip()
	}
	ix := &Indices{Title: "Sobol' indices of total", Output: "total", Series: []string{"first order", "total order"}, Interval: "95% confidence interval",
		Items: []IndexItem{
			{Name: "x2", Values: []float64{0.4424, 0.4424}, Lo: []float64{0.41, 0.42}, Hi: []float64{0.47, 0.46}},
			{Name: "x1", Values: []float64{0.3139, 0.5576}, Lo: []float64{0.28, 0.53}, Hi: []float64{0.34, 0.59}},
			{Name: "x3", Values: []float64{0.0, 0.2437}, Lo: []float64{-0.03, 0.22}, Hi: []float64{0.03, 0.27}},
		}}
	write(t, "idx", ix)
	fmt.Print(ix.Text(80))
	var xs, ys []float64
	s := uint64(3)
	for i := 0; i < 8000; i++ {
		s = s*6364136223846793005 + 1442695040888963407
		x := 40 + 40*float64(s>>11)/(1<<53)
		s = s*6364136223846793005 + 1442695040888963407
		e := float64(s>>11)/(1<<53) - 0.5
		xs = append(xs, x)
		ys = append(ys, 100000+1500*x+20000*e)
	}
	sc := &Scatter{XName: "rate", XUnit: "$/h", YName: "total", YUnit: "$", X: xs, Y: ys}
	write(t, "scatter", sc)
	fmt.Print(sc.Text(80))
}

func TestDemoEdges(t *testing.T) {
	if os.Getenv("DEMO") == "" {
		t.Skip()
	}
	neg := &Tornado{Output: "npv", Unit: "$", Baseline: -1000000, Bars: []Bar{
		{Name: "discount rate", Low: 6, High: 10, InputUnit: "%", OutLow: -800000, OutHigh: -1300000, Min: -1300000, Max: -800000},
		{Name: "capex of the second expansion phase including contingency", Low: 1e6, High: 2e6, InputUnit: "$", OutLow: -900000, OutHigh: -1100000, Min: -1100000, Max: -900000},
		{Name: "flat", Low: 1, High: 2, OutLow: -1000000, OutHigh: -1000000, Min: -1000000, Max: -1000000},
	}}
	write(t, "neg", neg)
	zero := &Tornado{Output: "total", Unit: "$", Baseline: 500, Bars: []Bar{
		{Name: "a", Low: 1, High: 2, OutLow: 500, OutHigh: 500, Min: 500, Max: 500},
	}}
	write(t, "zero", zero)
	f, _ := os.Create("/tmp/demo/empty.png")
	f.Write((&Tornado{Output: "total"}).PNG())
	f.Close()
	big := &Tornado{Output: "total", Unit: "$", Baseline: 1000}
	for i := 0; i < 30; i++ {
		s := float64(30-i) * 10
		big.Bars = append(big.Bars, Bar{Name: fmt.Sprintf("input_%02d", i), Low: 1, High: 2, InputUnit: "kg", OutLow: 1000 - s*0.6, OutHigh: 1000 + s*0.4, Min: 1000 - s*0.6, Max: 1000 + s*0.4})
	}
	write(t, "big", big)
}
