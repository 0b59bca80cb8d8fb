package plotting

import (
	"math"
	"strings"
	"unicode/utf8"
)

// Building blocks of the plain-text charts. All characters used are one
// column wide in a monospace terminal, so rune counts are column counts.

const defaultTextWidth = 80

var (
	// eighths[k] is a left-aligned block k/8 of a cell wide.
	eighths = []rune{' ', '▏', '▎', '▍', '▌', '▋', '▊', '▉', '█'}
	// sparks are bar heights from 1/8 to 8/8 of a cell.
	sparks = []rune{'▁', '▂', '▃', '▄', '▅', '▆', '▇', '█'}
	// shades go from empty to full.
	shades = []rune{' ', '░', '▒', '▓', '█'}
)

func textWidth(w int) int {
	if w <= 0 {
		return defaultTextWidth
	}
	return w
}

func runeLen(s string) int { return utf8.RuneCountInString(s) }

// padRight pads s with spaces to n columns, truncating with an ellipsis when
// it is longer.
func padRight(s string, n int) string {
	s = truncate(s, n)
	return s + strings.Repeat(" ", n-runeLen(s))
}

// padLeft right-aligns s in n columns, truncating with an ellipsis.
func padLeft(s string, n int) string {
	s = truncate(s, n)
	return strings.Repeat(" ", n-runeLen(s)) + s
}

// barRight returns a bar of length cells (fractional, eighth resolution)
// growing rightwards, padded to n cells.
func barRight(length float64, n int) []rune {
	out := []rune(strings.Repeat(" ", n))
	if !(length > 0) {
		return out
	}
	eighthsTotal := int(math.Round(length * 8))
	full := min(eighthsTotal/8, n)
	for i := range full {
		out[i] = '█'
	}
	if r := eighthsTotal % 8; r > 0 && full < n {
		out[full] = eighths[r]
	}
	return out
}

// barLeft returns a bar of length cells growing leftwards from the right
// edge of n cells. Unicode has right-aligned blocks only for 1/8 and 1/2 of
// a cell, so the free end has half-cell resolution.
func barLeft(length float64, n int) []rune {
	out := []rune(strings.Repeat(" ", n))
	if !(length > 0) {
		return out
	}
	halves := int(math.Round(length * 2))
	full := min(halves/2, n)
	for i := range full {
		out[n-1-i] = '█'
	}
	if halves%2 == 1 && full < n {
		out[n-1-full] = '▐'
	}
	return out
}

// sparkline maps ys to block heights between lo and hi, resampled to at most
// n characters.
func sparkline(ys []float64, lo, hi float64, n int) string {
	if len(ys) == 0 || n <= 0 {
		return ""
	}
	vals := ys
	if len(ys) > n {
		vals = resample(ys, n)
	}
	var b strings.Builder
	for _, v := range vals {
		k := 0
		if hi > lo {
			k = int(math.Round((v - lo) / (hi - lo) * float64(len(sparks)-1)))
		}
		k = max(0, min(len(sparks)-1, k))
		b.WriteRune(sparks[k])
	}
	return b.String()
}

// resample returns n values of ys by linear interpolation at n evenly
// spaced positions from the first to the last.
func resample(ys []float64, n int) []float64 {
	if len(ys) == n || len(ys) == 0 {
		return ys
	}
	if n == 1 || len(ys) == 1 {
		out := make([]float64, n)
		for i := range out {
			out[i] = ys[0]
		}
		return out
	}
	out := make([]float64, n)
	for i := range out {
		t := float64(i) / float64(n-1) * float64(len(ys)-1)
		j := int(t)
		if j >= len(ys)-1 {
			out[i] = ys[len(ys)-1]
			continue
		}
		f := t - float64(j)
		out[i] = ys[j] + f*(ys[j+1]-ys[j])
	}
	return out
}

// shade returns the shade character for fraction t in [0, 1].
func shade(t float64) rune {
	k := int(math.Round(t * float64(len(shades)-1)))
	return shades[max(0, min(len(shades)-1, k))]
}

// textMessage is the text form of a chart that cannot be drawn.
func textMessage(heading string, err error) string {
	return heading + ": " + err.Error() + "\n"
}

// scaleLabel is a value written on a text scale: centred on column at when
// align is 0, starting there when -1, ending there when 1.
type scaleLabel struct {
	text  string
	at    int
	align int
}

// scaleLabels writes labels into n columns in the order given, skipping any
// that would touch one already written.
func scaleLabels(n int, labels []scaleLabel) []rune {
	row := []rune(strings.Repeat(" ", n))
	used := make([]bool, n)
	for _, l := range labels {
		r := []rune(l.text)
		if len(r) > n {
			continue
		}
		start := l.at
		switch l.align {
		case 0:
			start -= len(r) / 2
		case 1:
			start -= len(r) - 1
		}
		start = max(0, min(n-len(r), start))
		free := true
		for i := max(0, start-1); i < min(n, start+len(r)+1); i++ {
			free = free && !used[i]
		}
		if !free {
			continue
		}
		copy(row[start:], r)
		for i := start; i < start+len(r); i++ {
			used[i] = true
		}
	}
	return row
}

// Wrap breaks s into lines of at most width columns at spaces, so that a long
// explanation is never cut mid-word; a word longer than width stands on a
// line of its own. Lines after the first are indented by two spaces. The
// lines are joined by newlines, without a final one.
func Wrap(s string, width int) string {
	width = textWidth(width)
	if runeLen(s) <= width {
		return s
	}
	var b strings.Builder
	line, indent := 0, ""
	for i, w := range strings.Fields(s) {
		n := runeLen(w)
		switch {
		case i == 0:
		case line+1+n > width:
			indent = "  "
			b.WriteString("\n" + indent)
			line = len(indent)
		default:
			b.WriteByte(' ')
			line++
		}
		b.WriteString(w)
		line += n
	}
	return b.String()
}
