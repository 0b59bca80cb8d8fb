package kernel

import (
	"github.com/nudge-dev/nudge/sens"
)

// What the sampling commands (simulate, sobol, morris, screen) share.

// seedOption chooses the random numbers of a sampling command.
var seedOption = Option{Key: "seed", Doc: "the random seed: the same seed gives the same numbers on any machine (1 when not given)", Min: 0}

// seed reads seed=S, 1 when not given.
func (x *call) seed() uint64 {
	s, given, _ := x.whole("seed")
	if !given {
		return 1
	}
	return uint64(s)
}

// noticeRanges says once per compilation which inputs are drawn uniformly
// over their range, having no distribution.
func (x *call) noticeRanges(names []string) {
	in := x.in
	prog, _ := in.Model.Compile()
	if in.noticedProg != prog || in.noticed == nil {
		in.noticedProg, in.noticed = prog, map[string]bool{}
	}
	var fresh []string
	for _, n := range names {
		if !in.noticed[n] {
			in.noticed[n] = true
			fresh = append(fresh, n)
		}
	}
	if len(fresh) > 0 {
		warn(x.sink, "%s", sens.RangeNotice(fresh))
	}
}

// noteIgnoredCorrelations warns that an analysis leaves the declared rank
// correlations out.
func (x *call) noteIgnoredCorrelations(n int) {
	switch {
	case n == 1:
		warn(x.sink, "%s assumes independent inputs: the rank correlation declared between them is left out (simulate applies it)", x.c.Verb)
	case n > 1:
		warn(x.sink, "%s assumes independent inputs: the %d rank correlations declared among them are left out (simulate applies them)", x.c.Verb, n)
	}
}
