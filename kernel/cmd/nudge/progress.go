package main

import (
	"io"
	"os"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"
)

// barDelay is how long work runs before its progress bar shows: shorter
// work shows none.
const barDelay = 500 * time.Millisecond

// progress draws one progress bar on standard error for work of known
// size, once the work has run for barDelay, and only when standard error is
// a terminal (and the command was not asked for JSON). The bar counts the
// code cells of a notebook, each a step; a long analysis inside a cell
// fills its step as it goes and names itself in the description. A nil
// *progress draws nothing.
type progress struct {
	w io.Writer

	mu      sync.Mutex
	bar     *progressbar.ProgressBar
	timer   *time.Timer
	max     int    // steps
	value   int    // steps done
	frac    int    // thousandths of the current step done
	name    string // what runs: "housing.ipynb cell 3 of 12"
	detail  string // the analysis: "simulate unit_cost"
	id      string // the analysis tracked by track
	stopped bool
}

// newProgress returns a progress for w when w is a terminal and quiet is
// false; else nil.
func newProgress(w io.Writer, quiet bool) *progress {
	f, ok := w.(*os.File)
	if quiet || !ok || !term.IsTerminal(int(f.Fd())) {
		return nil
	}
	return &progress{w: w}
}

// start begins work of max steps.
func (p *progress) start(max int, name string) {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.max, p.value, p.frac, p.name, p.detail, p.stopped = max, 0, 0, name, "", false
	p.timer = time.AfterFunc(barDelay, p.show)
}

func (p *progress) show() {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.stopped || p.bar != nil {
		return
	}
	p.bar = progressbar.NewOptions(p.max*stepUnits,
		progressbar.OptionSetWriter(p.w),
		progressbar.OptionSetWidth(24),
		progressbar.OptionThrottle(100*time.Millisecond),
		progressbar.OptionClearOnFinish(),
		progressbar.OptionSetDescription(p.description()),
	)
	p.bar.Set(p.position())
}

// stepUnits is the resolution of a step in the bar.
const stepUnits = 1000

func (p *progress) position() int { return p.value*stepUnits + p.frac }

func (p *progress) description() string {
	if p.detail == "" {
		return p.name
	}
	return p.name + ": " + p.detail
}

// step sets the number of steps done and what runs now.
func (p *progress) step(value int, name string) {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.value, p.frac, p.name, p.detail = value, 0, name, ""
	if p.bar != nil {
		// Set first: Describe draws at once, Set only every 100 ms.
		p.bar.Set(p.position())
		p.bar.Describe(p.description())
	}
}

// analysis shows the progress of an analysis inside the current step.
func (p *progress) analysis(label string, done, total int) {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.detail, p.frac = "", 0
	if total > 0 && done < total {
		p.detail, p.frac = label, stepUnits*done/total
	}
	if p.bar != nil {
		// Set first: Describe draws at once, Set only every 100 ms.
		p.bar.Set(p.position())
		p.bar.Describe(p.description())
	}
}

// stop clears the bar away.
func (p *progress) stop() {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.stopped, p.id = true, ""
	if p.timer != nil {
		p.timer.Stop()
	}
	if p.bar != nil {
		p.bar.Clear()
		p.bar = nil
	}
}

// track shows the progress of one analysis as a bar of its own (for `nudge
// exec`, which has no cells): a new id starts a new bar, done == total ends
// it.
func (p *progress) track(id, label string, done, total int) {
	if p == nil {
		return
	}
	p.mu.Lock()
	same := p.id == id && !p.stopped
	p.mu.Unlock()
	if done >= total {
		if same {
			p.stop()
		}
		return
	}
	if !same {
		p.stop()
		p.start(1, label)
		p.mu.Lock()
		p.id = id
		p.mu.Unlock()
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if total > 0 {
		p.frac = stepUnits * done / total
	}
	if p.bar != nil {
		p.bar.Set(p.position())
	}
}

// pause clears the bar from the terminal before other output is written
// there; the next update draws it again.
func (p *progress) pause() {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar != nil {
		p.bar.Clear()
	}
}
