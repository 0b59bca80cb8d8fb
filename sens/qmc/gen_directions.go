//go:build ignore

// gen_directions writes directions.bin, the compact form of the Joe & Kuo
// direction numbers in joekuo/new-joe-kuo-6.21201 that the package embeds.
// Run it with go generate after replacing the text file (its checksum is in
// joekuo/SHA256SUMS); TestTableMatchesText checks the two agree.
//
// Format (bits packed least significant first): a little-endian uint32, the
// number of dimensions after the first; then for each dimension 2, 3, ...:
// the degree s in 5 bits, the polynomial's inner coefficients a in s-1 bits,
// and for k = 1..s the odd direction number m_k < 2^k as (m_k-1)/2 in k-1
// bits.
package main

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"log"
	"os"
	"strconv"
	"strings"
)

func main() {
	f, err := os.Open("joekuo/new-joe-kuo-6.21201")
	if err != nil {
		log.Fatal(err)
	}
	defer f.Close()
	var w bitWriter
	w.buf = make([]byte, 4)
	dims := 0
	sc := bufio.NewScanner(f)
	line := 0
	for sc.Scan() {
		line++
		if line == 1 {
			continue // header
		}
		fields := strings.Fields(sc.Text())
		if len(fields) == 0 {
			continue
		}
		nums := make([]uint64, len(fields))
		for i, s := range fields {
			if nums[i], err = strconv.ParseUint(s, 10, 32); err != nil {
				log.Fatalf("line %d: %v", line, err)
			}
		}
		d, s, a, m := nums[0], nums[1], nums[2], nums[3:]
		if d != uint64(dims+2) || s == 0 || s > 31 || uint64(len(m)) != s || a >= 1<<(s-1) {
			log.Fatalf("line %d: unexpected dimension %d, degree %d, a %d, %d direction numbers", line, d, s, a, len(m))
		}
		w.put(s, 5)
		w.put(a, uint(s-1))
		for k, mk := range m {
			if mk&1 == 0 || mk >= 1<<(k+1) {
				log.Fatalf("line %d: m_%d = %d is not odd and below 2^%d", line, k+1, mk, k+1)
			}
			w.put(mk>>1, uint(k))
		}
		dims++
	}
	if err := sc.Err(); err != nil {
		log.Fatal(err)
	}
	binary.LittleEndian.PutUint32(w.buf[:4], uint32(dims))
	if err := os.WriteFile("directions.bin", w.buf, 0o644); err != nil {
		log.Fatal(err)
	}
	fmt.Printf("directions.bin: %d dimensions after the first, %d bytes\n", dims, len(w.buf))
}

type bitWriter struct {
	buf  []byte
	nbit uint // bits used in the last byte
}

func (w *bitWriter) put(v uint64, n uint) {
	for i := uint(0); i < n; i++ {
		if w.nbit == 0 {
			w.buf = append(w.buf, 0)
		}
		w.buf[len(w.buf)-1] |= byte(v>>i&1) << w.nbit
		w.nbit = (w.nbit + 1) % 8
	}
}
