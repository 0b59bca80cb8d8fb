package sens

import (
	"math"
	"math/bits"
	"slices"
)

// rankSorter orders samples for exact ranks, keeping its scratch space from
// one call to the next. It sorts one word a sample: the sample's
// order-preserving key (floatKey), less the smallest key and shifted left
// past the bits every key shares, in the upper bits, and the sample's index
// in the lower bits. A least-significant-digit radix sort on the top
// digits of the words, skipping a digit every word shares, leaves runs of
// words equal in those digits, which are sorted whole; words whose key bits
// are equal are then put in order of their full keys. The order is that of
// sorting (key, index): ascending values, -0 before +0, equal values in
// index order.
//
// Moving one 8-byte word instead of a key and an index, and sorting two
// digits of 12 bits below the bits all keys share rather than the upper
// four bytes, takes 0.54 of the time of ranker (BenchmarkRankOrder); 11-,
// 13- and 14-bit digits were slower.
type rankSorter struct {
	keys   []uint64 // keys[i]: floatKey of sample i
	w, tmp []uint64
	ib     uint   // bits of a word holding the index
	imask  uint64 // 1<<ib - 1
	low    uint   // shift of the least significant sorted digit
	// lossless says that the words hold every bit in which keys differ, so
	// that equal key bits in words mean equal keys.
	lossless bool
}

const (
	rankDigitBits = 12
	rankDigits    = 1 << rankDigitBits
)

// keysFor returns a buffer for the keys of n samples, to be filled with
// floatKey before sortKeys.
func (s *rankSorter) keysFor(n int) []uint64 {
	if cap(s.keys) < n {
		s.keys = make([]uint64, n)
	}
	return s.keys[:n]
}

// idx returns the sample index a word holds.
func (s *rankSorter) idx(w uint64) int { return int(w & s.imask) }

// tie says whether the samples of neighbouring sorted words a and b have
// the same key.
func (s *rankSorter) tie(a, b uint64) bool {
	if (a^b)>>s.ib != 0 {
		return false
	}
	return s.lossless || s.keys[a&s.imask] == s.keys[b&s.imask]
}

// sorted returns the words of xs sorted by sortKeys (in order of their top
// digits, for centredRanks and rankDot).
func (s *rankSorter) sorted(xs []float64) []uint64 {
	keys := s.keysFor(len(xs))
	lo, hi := uint64(math.MaxUint64), uint64(0)
	for i, x := range xs {
		k := floatKey(x)
		keys[i] = k
		lo, hi = min(lo, k), max(hi, k)
	}
	return s.sortKeys(len(xs), lo, hi)
}

// order returns the words of xs in final order (indices by idx), valid
// until the next call.
func (s *rankSorter) order(xs []float64) []uint64 {
	w := s.sorted(xs)
	for i := 0; i < len(w); {
		i = s.runEnd(w, i)
	}
	return w
}

// sortKeys sorts the first n keys of keysFor(n), whose smallest is lo and
// largest hi, by the radix sort and returns the n words, valid until the next call, in order of their top
// digits only: runEnd puts each run of words equal in those in final order,
// which centredRanks and rankDot do as they go.
func (s *rankSorter) sortKeys(n int, lo, hi uint64) []uint64 {
	if cap(s.w) < n {
		s.w, s.tmp = make([]uint64, n), make([]uint64, n)
	}
	keys := s.keys[:n]
	w, tmp := s.w[:n], s.tmp[:n]
	s.ib = uint(bits.Len(uint(max(n-1, 1))))
	s.imask = 1<<s.ib - 1
	s.low = 64
	if n == 0 {
		s.lossless = true
		return w
	}
	shift := uint(bits.LeadingZeros64(hi - lo)) // 64 when every key is equal
	s.lossless = shift >= s.ib
	imask := s.imask

	// The top digits the radix sort orders: about 8 buckets a sample, so
	// that runs are short, in one digit of at most 11 bits up to 256
	// samples and in two up to 2^18, three beyond.
	passes := 1
	for passes < 3 && uint64(1)<<(rankDigitBits*passes) < 8*uint64(n) {
		passes++
	}
	db := uint(rankDigitBits)
	dmask := uint64(1)<<db - 1
	low := 64 - db*uint(passes) // shift of the least significant digit
	s.low = low
	var count [3][rankDigits]uint32
	if passes == 2 {
		c0, c1 := &count[0], &count[1]
		for i, k := range keys {
			v := (k-lo)<<shift&^imask | uint64(i)
			w[i] = v
			c0[(v>>low)&(rankDigits-1)&dmask]++
			c1[(v>>(low+db))&(rankDigits-1)&dmask]++
		}
	} else {
		for i, k := range keys {
			v := (k-lo)<<shift&^imask | uint64(i)
			w[i] = v
			for p := range passes {
				count[p][(v>>(low+db*uint(p)))&(rankDigits-1)&dmask]++
			}
		}
	}
	for p := range passes {
		c := &count[p]
		sh := low + db*uint(p)
		if c[(w[0]>>sh)&dmask] == uint32(n) {
			continue // every word has this digit
		}
		var sum uint32
		for d := range c[:dmask+1] {
			c[d], sum = sum, sum+c[d]
		}
		for _, v := range w {
			d := (v >> sh) & (rankDigits - 1) & dmask
			tmp[c[d]] = v
			c[d]++
		}
		w, tmp = tmp, w
	}
	return w
}

// runEnd puts the run of words from w[i] that are equal in the sorted
// digits in final order: by the whole word, then, for words with equal key
// bits, by the full key and index. It returns the end of the run.
func (s *rankSorter) runEnd(w []uint64, i int) int {
	j := i + 1
	top := w[i] >> s.low
	for j < len(w) && w[j]>>s.low == top {
		j++
	}
	if j-i > 1 {
		run := w[i:j]
		sortWords(run)
		if !s.lossless {
			s.sortFullKeys(run)
		}
	}
	return j
}

// sortWords sorts a run of words: by insertion when short.
func sortWords(run []uint64) {
	if len(run) > 32 {
		slices.Sort(run)
		return
	}
	for p := 1; p < len(run); p++ {
		x := run[p]
		q := p
		for q > 0 && run[q-1] > x {
			run[q] = run[q-1]
			q--
		}
		run[q] = x
	}
}

// sortFullKeys puts the runs of run (sorted by word) whose words have equal
// key bits in order of their full keys, then index.
func (s *rankSorter) sortFullKeys(run []uint64) {
	for i := 0; i < len(run); {
		j := i + 1
		for j < len(run) && run[j]>>s.ib == run[i]>>s.ib {
			j++
		}
		if j-i > 1 {
			slices.SortFunc(run[i:j], func(a, b uint64) int {
				ka, kb := s.keys[a&s.imask], s.keys[b&s.imask]
				switch {
				case ka < kb:
					return -1
				case ka > kb:
					return 1
				}
				return int(a&s.imask) - int(b&s.imask)
			})
		}
		i = j
	}
}

// centredRanks writes into dst, at each sample's index, its rank among the
// sorted words w less the mean rank (n+1)/2, ties given their mean rank, and
// returns the sum of their squares. The centred ranks are multiples of 1/2
// and their squares of 1/4, so both, and the sum below about 2^51, are exact.
func (s *rankSorter) centredRanks(dst []float64, w []uint64) float64 {
	n := len(w)
	mid := float64(n+1) / 2
	imask, low := s.imask, s.low
	var ss float64
	for i := 0; i < n; {
		if i+1 == n || w[i+1]>>low != w[i]>>low {
			// Alone in its run: no tie.
			r := float64(i+1) - mid
			dst[w[i]&imask] = r
			ss += r * r
			i++
			continue
		}
		for e := s.runEnd(w, i); i < e; {
			j := i + 1
			for j < e && s.tie(w[j-1], w[j]) {
				j++
			}
			r := float64(i+j+1)/2 - mid // the mean of ranks i+1..j, centred
			for _, v := range w[i:j] {
				dst[v&imask] = r
			}
			ss += float64(j-i) * r * r
			i = j
		}
	}
	return ss
}

// rankDot returns, for the sorted words w of a sample x and the centred
// ranks ry of another, y, Σ rx·ry and Σ rx² over the centred ranks rx of x
// (ties at their mean rank). Each product is a multiple of 1/4, so the sums
// are exact below about 2^51 (n up to about 10^5) and otherwise rounded in an
// order fixed by the data.
func (s *rankSorter) rankDot(w []uint64, ry []float64) (dot, ss float64) {
	n := len(w)
	mid := float64(n+1) / 2
	imask, low := s.imask, s.low
	for i := 0; i < n; {
		if i+1 == n || w[i+1]>>low != w[i]>>low {
			r := float64(i+1) - mid
			dot += r * ry[w[i]&imask]
			ss += r * r
			i++
			continue
		}
		for e := s.runEnd(w, i); i < e; {
			j := i + 1
			for j < e && s.tie(w[j-1], w[j]) {
				j++
			}
			r := float64(i+j+1)/2 - mid
			var sy float64
			for _, v := range w[i:j] {
				sy += ry[v&imask]
			}
			dot += r * sy
			ss += float64(j-i) * r * r
			i = j
		}
	}
	return dot, ss
}

// rankCorrelation is Spearman's coefficient from rankDot's sums and the
// sum of squares of the other sample's centred ranks: Pearson's correlation
// of the ranks, whose means are (n+1)/2 exactly. It is 0 when either sample
// is constant.
func rankCorrelation(dot, ssx, ssy float64) float64 {
	if ssx == 0 || ssy == 0 {
		return 0
	}
	return dot / math.Sqrt(ssx*ssy)
}
