package sens

import (
	"fmt"
	"runtime"
	"sync"
	"sync/atomic"
	"time"
)

// progress counts the work of an analysis done on several goroutines and
// reports it through Settings.Progress from the goroutine that runs the
// analysis only.
type progress struct {
	s     *Settings
	done  atomic.Int64
	total int
}

func (p *progress) add(n int) { p.done.Add(int64(n)) }

func (p *progress) report() { p.s.progress(int(min(p.done.Load(), int64(p.total))), p.total) }

// progressInterval is how often a running analysis reports its progress.
const progressInterval = 100 * time.Millisecond

// workerCount returns the number of goroutines to use: n when positive,
// else GOMAXPROCS.
func workerCount(n int) int {
	if n > 0 {
		return n
	}
	return runtime.GOMAXPROCS(0)
}

// runChunks calls work(w, c) for every chunk c in 0..n-1 on up to workers
// goroutines, taking chunks in increasing order; w (0..workers-1) names the
// goroutine, so that work can keep buffers of its own per goroutine. A
// result must not depend on which goroutine ran a chunk: that is what makes
// an analysis give the same numbers whatever GOMAXPROCS is.
//
// runChunks stops when the context is cancelled (checked before every
// chunk) or a chunk fails; it returns the error of the lowest-numbered
// failing chunk (every chunk below it is run), so the error too is the same
// however the chunks were scheduled.
func runChunks(pr *progress, workers, n int, work func(w, c int) error) error {
	ctx := pr.s.ctx()
	workers = min(workerCount(workers), n)
	var next atomic.Int64
	var failedAt atomic.Int64
	failedAt.Store(int64(n))
	errs := make([]error, n)
	var wg sync.WaitGroup
	for w := range workers {
		wg.Go(func() {
			for {
				c := next.Add(1) - 1
				if c >= failedAt.Load() || ctx.Err() != nil {
					return
				}
				if err := work(w, int(c)); err != nil {
					errs[c] = err
					for {
						old := failedAt.Load()
						if c >= old || failedAt.CompareAndSwap(old, c) {
							break
						}
					}
				}
			}
		})
	}
	finished := make(chan struct{})
	go func() { wg.Wait(); close(finished) }()
	tick := time.NewTicker(progressInterval)
	defer tick.Stop()
wait:
	for {
		select {
		case <-finished:
			break wait
		case <-tick.C:
			pr.report()
		}
	}
	if err := ctx.Err(); err != nil {
		return fmt.Errorf("stopped: %w", err)
	}
	if c := failedAt.Load(); c < int64(n) {
		return errs[c]
	}
	pr.report()
	return nil
}
