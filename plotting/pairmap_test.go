package plotting

import (
	"strings"
	"testing"
)

// samplePairMap is an invented grid of four inputs' scaled interactions.
func samplePairMap() *PairMap {
	return &PairMap{Output: "total", Unit: "$", Names: []string{"hours", "rate", "scrap", "units"},
		Z: [][]float64{
			{1200, 9000, -300, 4000},
			{9000, 0, 0, 2500},
			{-300, 0, 150, 0},
			{4000, 2500, 0, -50},
		}}
}

func TestPairMap(t *testing.T) {
	m := samplePairMap()
	svg := m.SVG()
	for _, want := range []string{"Interactions: total", "hours", "units", "9,000"} {
		if !strings.Contains(svg, want) {
			t.Errorf("SVG lacks %q", want)
		}
	}
	alt := AltText(m)
	if !strings.Contains(alt, "The strongest pair is hours and rate ($9,000)") {
		t.Errorf("alt text %q does not name the strongest pair", alt)
	}
	txt := m.Text(80)
	if !strings.Contains(txt, "hours ┃") || !strings.Contains(txt, "█") {
		t.Errorf("text form:\n%s", txt)
	}
	bad := &PairMap{Output: "total", Names: []string{"a"}, Z: [][]float64{{1}}}
	if err := bad.Validate(); err == nil {
		t.Error("a grid of one input validates")
	}
}
