package sens

import (
	"encoding/binary"
	"math"
	"sort"
	"testing"
)

// FuzzRankOrder checks the rank sorter on samples read from the fuzz bytes
// (ties, signed zeros, infinities, values sharing their upper bits, wide
// exponents, subnormals; no NaN, which simulate never ranks), with one
// sorter reused from sample to sample as simulate does: the order against
// a stable sort of (value key, index) by Go's sort package, the centred
// mean ranks against ranks counted by brute force, and rankDot against the
// sum of products of those ranks.
func FuzzRankOrder(f *testing.F) {
	f.Add([]byte{1, 2, 3, 4, 5, 6, 7, 8, 9}, []byte{9, 8, 7})
	f.Add([]byte("ties ties ties and more ties"), []byte("0123456789abcdef0123456789abcdef"))
	f.Add(make([]byte, 300), []byte{0xff, 0xfe, 0x80, 0x7f, 0x00, 0x01})
	var rs rankSorter
	f.Fuzz(func(t *testing.T, a, b []byte) {
		for _, data := range [][]byte{a, b, a} {
			checkRankOrder(t, &rs, rankFuzzSample(data))
		}
	})
}

// rankFuzzSample reads a sample: each byte a value from a small alphabet
// (so that ties are common) or, after a marker, raw bits; a sample of a few
// bytes is repeated to hundreds of values to reach the sorter's wider digit
// choices.
func rankFuzzSample(data []byte) []float64 {
	alphabet := []float64{0, math.Copysign(0, -1), 1, -1, 0.5, 2, 1e300, -1e300, math.Inf(1), math.Inf(-1),
		5e-324, -5e-324, 1 + 0x1p-52, 1 + 0x2p-52, math.MaxFloat64, 3}
	var xs []float64
	for i := 0; i < len(data); i++ {
		c := data[i]
		switch {
		case c < 0x80:
			xs = append(xs, alphabet[c%16])
		case c < 0xc0:
			xs = append(xs, math.Float64frombits(0x3ff0_0000_0000_0000|uint64(c&0x3f)<<int(data[(i+1)%len(data)]%46)))
		case c < 0xf8:
			xs = append(xs, float64(int(c)-0xdc)*1e-3)
		default:
			var w [8]byte
			copy(w[:], data[min(i+1, len(data)):])
			i += 8
			if v := math.Float64frombits(binary.LittleEndian.Uint64(w[:])); !math.IsNaN(v) {
				xs = append(xs, v)
			}
		}
	}
	if len(xs) > 0 && len(data) > 0 && data[0]%4 == 0 {
		reps := 1 + 3000/len(xs)
		for range reps {
			xs = append(xs, xs[:len(xs)/reps+1]...)
		}
	}
	return xs
}

func checkRankOrder(t *testing.T, rs *rankSorter, xs []float64) {
	n := len(xs)
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(i, j int) bool { return floatKey(xs[idx[i]]) < floatKey(xs[idx[j]]) })
	w := rs.order(xs)
	if len(w) != n {
		t.Fatalf("%d words for %d samples", len(w), n)
	}
	for r, v := range w {
		if rs.idx(v) != idx[r] {
			t.Fatalf("position %d of %d holds sample %d (%v), the stable sort sample %d (%v)", r, n, rs.idx(v), xs[rs.idx(v)], idx[r], xs[idx[r]])
		}
	}
	// Mean ranks from the stable sort's order: a run of equal keys shares
	// the mean of its positions.
	want := make([]float64, n)
	mid := float64(n+1) / 2
	for i := 0; i < n; {
		j := i + 1
		for j < n && floatKey(xs[idx[j]]) == floatKey(xs[idx[i]]) {
			j++
		}
		for _, k := range idx[i:j] {
			want[k] = float64(i+j+1)/2 - mid
		}
		i = j
	}
	got := make([]float64, n)
	ss := rs.centredRanks(got, rs.sorted(xs))
	var wss float64
	for i := range got {
		if got[i] != want[i] {
			t.Fatalf("centred rank of sample %d (%v) of %d is %v, counted %v", i, xs[i], n, got[i], want[i])
		}
		wss += want[i] * want[i]
	}
	if n < 1<<20 && ss != wss { // both exact: multiples of 1/4 below 2^51
		t.Fatalf("sum of squared ranks %v, counted %v", ss, wss)
	}
	// rankDot against the ranks of a fixed other sample.
	ry := make([]float64, n)
	for i := range ry {
		ry[i] = float64((i*7919)%(n+3)) / 2
	}
	dot, ss2 := rs.rankDot(rs.sorted(xs), ry)
	var wdot float64
	for i := range want {
		wdot += want[i] * ry[i]
	}
	if ss2 != wss || math.Abs(dot-wdot) > 1e-9*math.Max(1, math.Abs(wdot)) {
		t.Fatalf("rankDot gives %v, %v; counted %v, %v", dot, ss2, wdot, wss)
	}
}
