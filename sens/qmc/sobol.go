package qmc

import (
	_ "embed"
	"encoding/binary"
	"fmt"
	"math/bits"
	"sync"
)

// MaxDim is the number of dimensions the embedded table provides: the first
// (the van der Corput sequence in base 2) and the 21,200 of the Joe & Kuo
// file.
const MaxDim = 21201

// MaxPoints is the number of points a 32-bit Sobol' sequence holds.
const MaxPoints = 1 << 32

//go:embed directions.bin
var directionsBin []byte

// poly is one dimension's primitive polynomial and initial direction
// numbers.
type poly struct {
	s uint8  // degree
	a uint32 // inner coefficients a_1..a_{s-1}, a_1 the most significant
	m []uint32
}

var (
	tableOnce sync.Once
	table     []poly // table[j] is dimension j+2
)

func loadTable() {
	n := int(binary.LittleEndian.Uint32(directionsBin[:4]))
	r := bitReader{buf: directionsBin[4:]}
	table = make([]poly, n)
	ms := make([]uint32, 0, 18*n)
	for j := range table {
		s := uint8(r.get(5))
		a := uint32(r.get(uint(s) - 1))
		start := len(ms)
		for k := uint(0); k < uint(s); k++ {
			ms = append(ms, uint32(r.get(k))<<1|1)
		}
		table[j] = poly{s: s, a: a, m: ms[start:len(ms):len(ms)]}
	}
}

type bitReader struct {
	buf []byte
	pos uint // bit position
}

func (r *bitReader) get(n uint) uint64 {
	var v uint64
	for i := uint(0); i < n; i++ {
		b := r.buf[r.pos>>3] >> (r.pos & 7) & 1
		v |= uint64(b) << i
		r.pos++
	}
	return v
}

// directions returns the 32 direction numbers of dimension d (1-based),
// scaled to 32 bits: v[k] is V_{k+1} = m_{k+1} 2^(32-k-1).
//
// For a dimension of degree s with inner coefficients a_1..a_{s-1}, the
// direction numbers beyond the first s follow the recurrence
//
//	V_k = a_1 V_{k-1} ^ a_2 V_{k-2} ^ ... ^ a_{s-1} V_{k-s+1} ^ V_{k-s} ^ (V_{k-s} >> s)
func directions(d int) [32]uint32 {
	var v [32]uint32
	if d == 1 {
		for k := range v {
			v[k] = 1 << (31 - k)
		}
		return v
	}
	p := table[d-2]
	s := int(p.s)
	for k := 0; k < s && k < 32; k++ {
		v[k] = p.m[k] << (31 - k)
	}
	for k := s; k < 32; k++ {
		v[k] = v[k-s] ^ v[k-s]>>s
		for l := 1; l < s; l++ {
			if p.a>>(s-1-l)&1 == 1 {
				v[k] ^= v[k-l]
			}
		}
	}
	return v
}

// Sobol generates the points of the Sobol' sequence in Gray-code order:
// point 0 is the origin, and point i is
//
//	x_i = g_1 V_1 ^ g_2 V_2 ^ ...,  g = i ^ (i >> 1)
//
// with the bits g_k of the Gray code of i, coordinates scaled by 2^-32.
// The first 2^m points of every coordinate fall one in each interval
// [j/2^m, (j+1)/2^m).
//
// A Sobol is not safe for concurrent use; make one per goroutine (they
// share the table).
type Sobol struct {
	v     [][32]uint32
	x     []uint32
	index uint64 // the index of the point Next returns
}

// NewSobol returns a generator of points in dim dimensions, positioned at
// point 0 (the origin).
func NewSobol(dim int) (*Sobol, error) {
	if dim < 1 {
		return nil, fmt.Errorf("qmc: a Sobol' sequence needs at least 1 dimension, got %d", dim)
	}
	if dim > MaxDim {
		return nil, &DimError{Dim: dim}
	}
	tableOnce.Do(loadTable)
	s := &Sobol{v: make([][32]uint32, dim), x: make([]uint32, dim)}
	for d := range s.v {
		s.v[d] = directions(d + 1)
	}
	return s, nil
}

// DimError is the error of a request for more dimensions than the table
// holds.
type DimError struct{ Dim int }

func (e *DimError) Error() string {
	return fmt.Sprintf("qmc: %d dimensions asked for, but the Joe & Kuo table of Sobol' direction numbers has %d", e.Dim, MaxDim)
}

// Dim returns the number of dimensions.
func (s *Sobol) Dim() int { return len(s.v) }

// Index returns the index of the point that Next returns next.
func (s *Sobol) Index() uint64 { return s.index }

// Seek positions the generator at point i.
func (s *Sobol) Seek(i uint64) {
	if i >= MaxPoints {
		panic(fmt.Sprintf("qmc: point %d beyond the 2^32 points of the sequence", i))
	}
	s.PointBits(s.x, i)
	s.index = i
}

// PointBits writes the coordinates of point i as 32-bit fractions (the
// coordinate times 2^32) into dst, which must have Dim elements, and
// returns it.
func (s *Sobol) PointBits(dst []uint32, i uint64) []uint32 {
	if len(dst) != len(s.v) {
		panic("qmc: wrong length of dst")
	}
	g := i ^ i>>1
	for d := range dst {
		var x uint32
		for gg := g; gg != 0; gg &= gg - 1 {
			x ^= s.v[d][bits.TrailingZeros64(gg)]
		}
		dst[d] = x
	}
	return dst
}

// NextBits writes the current point as 32-bit fractions into dst, which
// must have Dim elements, and moves to the next point: from point i to
// i+1 only the coordinate bits of direction c change, with c the number
// of trailing ones of i.
func (s *Sobol) NextBits(dst []uint32) []uint32 {
	if len(dst) != len(s.v) {
		panic("qmc: wrong length of dst")
	}
	copy(dst, s.x)
	s.advance()
	return dst
}

func (s *Sobol) advance() {
	if s.index >= MaxPoints {
		panic("qmc: the 2^32 points of the sequence are used up")
	}
	c := bits.TrailingZeros64(^s.index)
	if c < 32 {
		for d := range s.x {
			s.x[d] ^= s.v[d][c]
		}
	}
	s.index++
}

// Next writes the current point into dst, which must have Dim elements, and
// moves to the next point.
func (s *Sobol) Next(dst []float64) []float64 {
	if len(dst) != len(s.v) {
		panic("qmc: wrong length of dst")
	}
	for d, x := range s.x {
		dst[d] = float64(x) * 0x1p-32
	}
	s.advance()
	return dst
}
