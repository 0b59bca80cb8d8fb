package qmc

import (
	"bufio"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"os"
	"strconv"
	"strings"
	"testing"
)

// TestFirstPoints checks the first points of dimensions 1 to 3 against those
// listed in joekuo/README.md (which follow directly from the table):
// (0.5, 0.5, 0.5), (0.75, 0.25, 0.25), (0.25, 0.75, 0.75),
// (0.375, 0.375, 0.625), after the all-zero point.
func TestFirstPoints(t *testing.T) {
	want := [][]float64{
		{0, 0, 0},
		{0.5, 0.5, 0.5},
		{0.75, 0.25, 0.25},
		{0.25, 0.75, 0.75},
		{0.375, 0.375, 0.625},
	}
	s, err := NewSobol(3)
	if err != nil {
		t.Fatal(err)
	}
	got := make([]float64, 3)
	bits := make([]uint32, 3)
	for i, w := range want {
		s.Next(got)
		for d := range w {
			if got[d] != w[d] {
				t.Errorf("point %d: got %v, want %v", i, got, w)
				break
			}
		}
		// Random access agrees with the sequential order.
		s2, _ := NewSobol(3)
		s2.PointBits(bits, uint64(i))
		for d := range w {
			if float64(bits[d])*0x1p-32 != w[d] {
				t.Errorf("PointBits(%d) = %v, want %v", i, bits, w)
				break
			}
		}
	}
}

// TestStratified checks the defining property of a Sobol' sequence (Sobol'
// 1967): in every coordinate, the first 2^m points fall one in each of the
// 2^m intervals [j/2^m, (j+1)/2^m). It runs over dimensions spread across the
// whole table, the last one included.
func TestStratified(t *testing.T) {
	const m = 10
	dims := []int{1, 2, 3, 10, 100, 1000, 5000, 12345, 20000, MaxDim}
	s, err := NewSobol(MaxDim)
	if err != nil {
		t.Fatal(err)
	}
	x := make([]uint32, MaxDim)
	seen := make([][]bool, len(dims))
	for i := range seen {
		seen[i] = make([]bool, 1<<m)
	}
	for i := 0; i < 1<<m; i++ {
		s.NextBits(x)
		for j, d := range dims {
			cell := x[d-1] >> (32 - m)
			if seen[j][cell] {
				t.Fatalf("dimension %d: two of the first 2^%d points in interval %d", d, m, cell)
			}
			seen[j][cell] = true
		}
	}
}

// TestSeekAndPointBits checks that Seek, PointBits and the sequential order
// agree far into the sequence.
func TestSeekAndPointBits(t *testing.T) {
	const dim = 40
	a, _ := NewSobol(dim)
	b, _ := NewSobol(dim)
	start := uint64(1<<20 - 3)
	a.Seek(start)
	xa, xb := make([]uint32, dim), make([]uint32, dim)
	for i := start; i < start+10; i++ {
		a.NextBits(xa)
		b.PointBits(xb, i)
		for d := range xa {
			if xa[d] != xb[d] {
				t.Fatalf("point %d, dimension %d: sequential %d, random access %d", i, d+1, xa[d], xb[d])
			}
		}
	}
	if a.Index() != start+10 {
		t.Errorf("Index() = %d, want %d", a.Index(), start+10)
	}
}

func TestTooManyDims(t *testing.T) {
	_, err := NewSobol(MaxDim + 1)
	var de *DimError
	if !errors.As(err, &de) || de.Dim != MaxDim+1 {
		t.Fatalf("NewSobol(MaxDim+1): got %v, want a *DimError", err)
	}
	if !strings.Contains(err.Error(), "21201") {
		t.Errorf("message %q does not give the table's size", err)
	}
	if _, err := NewSobol(0); err == nil {
		t.Error("NewSobol(0): no error")
	}
}

// TestTableMatchesText decodes the embedded table and compares every
// dimension with the published text file, whose SHA-256 must be the one in
// joekuo/SHA256SUMS.
func TestTableMatchesText(t *testing.T) {
	raw, err := os.ReadFile("joekuo/new-joe-kuo-6.21201")
	if err != nil {
		t.Fatal(err)
	}
	sums, err := os.ReadFile("joekuo/SHA256SUMS")
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(raw)
	if want := strings.Fields(string(sums))[0]; hex.EncodeToString(sum[:]) != want {
		t.Fatalf("new-joe-kuo-6.21201 has SHA-256 %x, SHA256SUMS says %s", sum, want)
	}
	tableOnce.Do(loadTable)
	if len(table)+1 != MaxDim {
		t.Fatalf("table has %d dimensions, MaxDim is %d", len(table)+1, MaxDim)
	}
	sc := bufio.NewScanner(strings.NewReader(string(raw)))
	sc.Scan() // header
	j := 0
	for sc.Scan() {
		f := strings.Fields(sc.Text())
		if len(f) == 0 {
			continue
		}
		n := make([]uint32, len(f))
		for i, s := range f {
			v, err := strconv.ParseUint(s, 10, 32)
			if err != nil {
				t.Fatal(err)
			}
			n[i] = uint32(v)
		}
		p := table[j]
		if int(n[0]) != j+2 || uint32(p.s) != n[1] || p.a != n[2] || len(p.m) != len(n)-3 {
			t.Fatalf("dimension %d: table (s=%d, a=%d, %d numbers) differs from the file line %v", j+2, p.s, p.a, len(p.m), n)
		}
		for k, m := range n[3:] {
			if p.m[k] != m {
				t.Fatalf("dimension %d: m_%d = %d in the table, %d in the file", j+2, k+1, p.m[k], m)
			}
		}
		j++
	}
	if j != len(table) {
		t.Fatalf("file has %d dimensions, table %d", j, len(table))
	}
}

func BenchmarkNext(b *testing.B) {
	for _, dim := range []int{20, 1000} {
		b.Run(strconv.Itoa(dim), func(b *testing.B) {
			s, _ := NewSobol(dim)
			x := make([]float64, dim)
			b.ReportAllocs()
			for b.Loop() {
				if s.Index() == MaxPoints-1 {
					s.Seek(0)
				}
				s.Next(x)
			}
		})
	}
}
