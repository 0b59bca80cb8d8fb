package sens

import (
	"errors"
	"fmt"

	"github.com/nudge-dev/nudge/sens/tape"
)

// ExploreInput is one input a what-if panel moves: its baseline and range in
// its own unit, and the output at the ends of the range with the other
// inputs at their baselines (the tornado's bar).
type ExploreInput struct {
	Name         string      `json:"name"`
	Unit         string      `json:"unit"`
	Value        float64     `json:"value"`
	Low          float64     `json:"low"`
	High         float64     `json:"high"`
	Source       RangeSource `json:"source"`
	OutputAtLow  float64     `json:"output_at_low"`
	OutputAtHigh float64     `json:"output_at_high"`
}

// ExploreResult is what a what-if panel needs: the output at the baseline,
// the inputs it moves (the largest swings of the tornado, largest first), and
// the listing of the compiled output in those inputs, which the panel
// evaluates in the page.
type ExploreResult struct {
	Kind   string         `json:"kind"` // "explore"
	Output string         `json:"output"`
	Unit   string         `json:"unit"`
	Value  float64        `json:"value"`
	Inputs []ExploreInput `json:"inputs"`
	// Chosen is set when the inputs were named, not ranked.
	Chosen bool `json:"chosen,omitempty"`
	// Held is the number of inputs the output depends on that keep their
	// baselines.
	Held int `json:"held"`
	// Slots is the size of the listing (entries and loop elements); 0 when
	// none was made.
	Slots int `json:"slots"`
	// NoPanel says why no listing was made: it would exceed
	// ExploreSettings.Limit, or the output uses an operation the panel
	// cannot evaluate.
	NoPanel string `json:"no_panel,omitempty"`
	// Listing is the compiled output in the inputs, the others folded in.
	Listing *Listing `json:"-"`
}

// ExploreSettings are the settings of Explore. A nil *ExploreSettings means
// the defaults.
type ExploreSettings struct {
	Settings
	// Inputs are the inputs moved (indices into Problem.Inputs), in the
	// order of the sliders; when empty, the Top inputs of largest swing.
	Inputs []int
	// Top is the number of inputs moved (DefaultExploreTop when 0) when
	// Inputs is empty.
	Top int
	// Limit is the most slots a listing may hold (DefaultExploreLimit when
	// 0): a page evaluates it on every move of a slider, and a notebook
	// stores it.
	Limit int
}

// DefaultExploreTop is how many inputs a what-if panel moves by default.
const DefaultExploreTop = 6

// DefaultExploreLimit is the largest listing a what-if panel carries, in
// slots (about 20 bytes each in the page).
const DefaultExploreLimit = 20000

// Explore prepares a what-if panel of the problem's output: it ranks the
// inputs by their tornado swings and keeps the Top largest (or takes the
// Inputs asked for), and writes the compiled output out as a listing in
// which those inputs move and the others stay at their baselines.
func Explore(pr *Problem, s *ExploreSettings) (*ExploreResult, error) {
	top, limit := DefaultExploreTop, DefaultExploreLimit
	var set Settings
	var chosen []int
	if s != nil {
		if s.Top > 0 {
			top = s.Top
		}
		if s.Limit > 0 {
			limit = s.Limit
		}
		set = s.Settings
		chosen = s.Inputs
	}
	if len(chosen) > 0 {
		top = 0 // every bar, to pick the chosen ones from
	}
	t, err := Tornado(pr, &TornadoSettings{Settings: set, Top: top, Interior: -1})
	if err != nil {
		return nil, err
	}
	bars := t.Bars
	if len(chosen) > 0 {
		byName := map[string]TornadoBar{}
		for _, b := range t.Bars {
			byName[b.Name] = b
		}
		bars = nil
		for _, j := range chosen {
			if j < 0 || j >= len(pr.Inputs) {
				return nil, fmt.Errorf("no input %d", j)
			}
			b, ok := byName[pr.Inputs[j].Name]
			if !ok {
				return nil, fmt.Errorf("%s has no tornado bar", pr.Inputs[j].Name)
			}
			bars = append(bars, b)
		}
	}
	r := &ExploreResult{Kind: "explore", Output: pr.Output, Unit: pr.Unit, Value: t.Baseline, Chosen: len(chosen) > 0}
	var free []int
	for _, b := range bars {
		_, j, err := pr.Input(b.Name)
		if err != nil {
			return nil, err
		}
		free = append(free, j)
		r.Inputs = append(r.Inputs, ExploreInput{Name: b.Name, Unit: b.Unit, Value: b.Value, Low: b.Low, High: b.High,
			Source: b.Source, OutputAtLow: b.OutputAtLow, OutputAtHigh: b.OutputAtHigh})
	}
	r.Held = len(pr.Inputs) - len(free)
	L, err := pr.Listing(pr.Baseline(), free, limit)
	switch {
	case errors.Is(err, tape.ErrNotListable):
		r.NoPanel = fmt.Sprintf("%s uses an operation the panel's script does not know (%v)", pr.Output, err)
		return r, nil
	case errors.Is(err, tape.ErrListingTooLarge):
		r.NoPanel = fmt.Sprintf("the output needs more than %d operations between these inputs and itself, too many to carry in a page: explore a formula nearer the inputs, or fewer inputs (top=N)", limit)
		return r, nil
	case err != nil:
		return nil, err
	}
	r.Listing = L
	for _, e := range L.Entries {
		r.Slots += e.Width
	}
	return r, nil
}
