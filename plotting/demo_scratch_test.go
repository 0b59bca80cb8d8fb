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
