package tape

// The order of a long sum.
//
// A sum of more than sumBlock terms is cut into blocks of sumBlock terms
// (the last may be shorter); each block is summed as a short sum is
// (sumLeaf: four partial sums), and the block sums are added pairwise, as
// the leaves of a binary tree: block sums 2i and 2i+1 make a node of
// height 1, two neighbouring nodes of height h one of height h+1, and the
// complete trees left over at the right end, one for each bit set in the
// number of blocks, are added from the right:
//
//	T1 + (T2 + (... + Tr))
//
// A left-to-right pass builds this tree with a stack of at most
// log2(blocks)+1 partial sums (a binary counter), so a forward pass costs
// one addition a term plus one a block. The tree is what lets a point that
// changes a few terms be evaluated in O(log n): the blocks holding the
// changed terms are summed again, then the nodes above them (sumTree),
// and the result is the full pass's to the bit, the same additions on the
// same operands. Pairwise summation also bounds the rounding error by
// about (sumBlock/4 + log2(n/sumBlock)) units in the last place times the
// sum of the magnitudes, instead of n/4 of them.
//
// References:
//   - N. J. Higham, Accuracy and Stability of Numerical Algorithms, 2nd
//     ed., SIAM 2002, section 4.2 (pairwise summation and its error bound).

// sumBlock is the number of terms of a block of a long sum.
const sumBlock = 64

// sumLeaf returns the sum of xs (of xs[j]*ys[j] when ys is not nil) for a
// block: below sumLanes terms from the first on; from sumLanes terms on,
// term j is added to partial sum j mod 4, each partial sum from its first
// term on, and the result is (s0 + s1) + (s2 + s3).
func sumLeaf(xs, ys []float64) float64 {
	n := len(xs)
	if n < sumLanes {
		t := func(j int) float64 {
			if ys == nil {
				return xs[j]
			}
			return float64(xs[j] * ys[j]) // the conversion forbids a fused multiply-add
		}
		r := t(0)
		for j := 1; j < n; j++ {
			r += t(j)
		}
		return r
	}
	if ys == nil {
		return sum4(xs)
	}
	return dot4(xs, ys[:n])
}

// sumShape calls leaf for each block of a sum of n terms and add for each
// addition of the tree above them, in the order of sumOrdered, and returns
// the root. The Builder uses it to lay out a long sum as scalar operations.
func sumShape[T any](n int, leaf func(lo, hi int) T, add func(a, b T) T) T {
	if n <= sumBlock {
		return leaf(0, n)
	}
	var st [64]T
	var ht [64]uint8
	sp := 0
	for lo := 0; lo < n; lo += sumBlock {
		st[sp], ht[sp] = leaf(lo, min(lo+sumBlock, n)), 0
		sp++
		for sp >= 2 && ht[sp-2] == ht[sp-1] {
			st[sp-2] = add(st[sp-2], st[sp-1])
			ht[sp-2]++
			sp--
		}
	}
	for sp >= 2 {
		st[sp-2] = add(st[sp-2], st[sp-1])
		sp--
	}
	return st[0]
}

// sumTree holds every node of the tree of a long sum at a base point, so
// that the sum with a few terms changed takes O(changed blocks × (sumBlock
// + log2 n)) operations, with the bits of a full pass.
type sumTree struct {
	// lv[0] holds the block sums; lv[h][i] = lv[h-1][2i] + lv[h-1][2i+1],
	// for the complete pairs only.
	lv   [][]float64
	undo []treeUndo // the nodes changed since the last restore
}

type treeUndo struct {
	h, i int32
	v    float64
}

// newSumTree returns the tree of the sum of xs (of the products with ys
// when ys is not nil).
func newSumTree(xs, ys []float64) *sumTree {
	n := len(xs)
	nb := (n + sumBlock - 1) / sumBlock
	t := &sumTree{lv: [][]float64{make([]float64, nb)}}
	for b := range nb {
		t.lv[0][b] = t.leaf(xs, ys, b)
	}
	for h := 1; len(t.lv[h-1]) >= 2; h++ {
		below := t.lv[h-1]
		up := make([]float64, len(below)/2)
		for i := range up {
			up[i] = below[2*i] + below[2*i+1]
		}
		t.lv = append(t.lv, up)
	}
	return t
}

// leaf returns the sum of block b of xs (and ys).
func (t *sumTree) leaf(xs, ys []float64, b int) float64 {
	lo, hi := b*sumBlock, min((b+1)*sumBlock, len(xs))
	switch {
	case hi-lo < sumBlock:
	case ys == nil:
		return sumFull((*[sumBlock]float64)(xs[lo:]))
	default:
		return dotFull((*[sumBlock]float64)(xs[lo:]), (*[sumBlock]float64)(ys[lo:]))
	}
	if ys == nil {
		return sumLeaf(xs[lo:hi], nil)
	}
	return sumLeaf(xs[lo:hi], ys[lo:hi])
}

// set changes node i of height h, remembering its value for restore.
func (t *sumTree) set(h, i int, v float64) {
	t.undo = append(t.undo, treeUndo{int32(h), int32(i), t.lv[h][i]})
	t.lv[h][i] = v
}

// update sums block b of xs (and ys) again and the nodes above it.
func (t *sumTree) update(xs, ys []float64, b int) {
	t.set(0, b, t.leaf(xs, ys, b))
	for h := 1; h < len(t.lv) && b>>h < len(t.lv[h]); h++ {
		i := b >> h
		t.set(h, i, t.lv[h-1][2*i]+t.lv[h-1][2*i+1])
	}
}

// root returns the sum: the complete trees, one for each bit of the number
// of blocks from the highest, added from the right.
func (t *sumTree) root() float64 {
	nb := len(t.lv[0])
	var part [64]float64
	np, off := 0, 0
	for h := len(t.lv) - 1; h >= 0; h-- {
		if nb>>h&1 == 1 {
			part[np] = t.lv[h][off>>h]
			np++
			off += 1 << h
		}
	}
	r := part[np-1]
	for k := np - 2; k >= 0; k-- {
		r = part[k] + r
	}
	return r
}

// restore undoes every change since the last restore.
func (t *sumTree) restore() {
	for k := len(t.undo) - 1; k >= 0; k-- {
		u := t.undo[k]
		t.lv[u.h][u.i] = u.v
	}
	t.undo = t.undo[:0]
}

// sumIndexed returns sumOrdered of xs[idx[0]], xs[idx[1]], ...: the sum of
// a group's members.
func sumIndexed(xs []float64, idx []int32) float64 {
	leaf := func(lo, hi int) float64 {
		m := idx[lo:hi]
		if len(m) < sumLanes {
			r := xs[m[0]]
			for _, i := range m[1:] {
				r += xs[i]
			}
			return r
		}
		s := [sumLanes]float64{xs[m[0]], xs[m[1]], xs[m[2]], xs[m[3]]}
		for j := sumLanes; j < len(m); j++ {
			s[j%sumLanes] += xs[m[j]]
		}
		return (s[0] + s[1]) + (s[2] + s[3])
	}
	if len(idx) <= sumBlock {
		return leaf(0, len(idx))
	}
	var st [64]float64
	var ht [64]uint8
	sp := 0
	for lo := 0; lo < len(idx); lo += sumBlock {
		st[sp], ht[sp] = leaf(lo, min(lo+sumBlock, len(idx))), 0
		sp++
		for sp >= 2 && ht[sp-2] == ht[sp-1] {
			st[sp-2] += st[sp-1]
			ht[sp-2]++
			sp--
		}
	}
	for sp >= 2 {
		st[sp-2] += st[sp-1]
		sp--
	}
	return st[0]
}
