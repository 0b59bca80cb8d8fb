package syntax

import (
	"hash/maphash"
	"strings"
)

// nameTable numbers the names of a file as it is parsed (Ident.ID). It is
// an open-addressing hash table of 16-byte cells, each holding a name's
// number, its length, part of its hash and its first 8 bytes: a name of 8
// bytes or fewer is found by reading one cell, which matters when the
// table outgrows the caches (a million-line model has 1.25 million names,
// and its references to inputs land anywhere in the table); a longer name
// is compared with its string when the cell agrees. A name's string is
// shared by its identifiers, cut from blocks of text, one allocation a
// block.
type nameTable struct {
	cells []nameCell
	strs  []string // by id-1-base; the first base numbers are an earlier parse's
	base  int32
	count int32 // the last number given
	seed  maphash.Seed
	block strings.Builder // the text the latest names are cut from
}

type nameCell struct {
	head [8]byte // the name's first 8 bytes, zero after its end
	key  uint32  // hash bits above the length (cellKey)
	id   int32   // 0: an empty cell
}

// cellKey packs 24 bits of h with n, the length (255 for 255 or more).
func cellKey(h uint64, n int) uint32 { return uint32(h>>40)<<8 | uint32(min(n, 255)) }

func headOf(b []byte) (head [8]byte) {
	copy(head[:], b)
	return head
}

func newNameTable(hint int, base int32) *nameTable {
	size := 64
	for size < 2*hint {
		size *= 2
	}
	return &nameTable{cells: make([]nameCell, size), strs: make([]string, 0, hint), base: base, count: base, seed: maphash.MakeSeed()}
}

// lookupID returns b's number, or 0 when b is not numbered.
func (t *nameTable) lookupID(b []byte) int32 {
	h := maphash.Bytes(t.seed, b)
	key, head := cellKey(h, len(b)), headOf(b)
	mask := len(t.cells) - 1
	for i := int(h) & mask; ; i = (i + 1) & mask {
		c := &t.cells[i]
		if c.id == 0 {
			return 0
		}
		if c.key == key && c.head == head && (len(b) <= len(head) || t.str(c.id) == string(b)) {
			return c.id
		}
	}
}

// lookup returns b's number and string, or 0 when b is not numbered.
func (t *nameTable) lookup(b []byte) (int32, string) {
	id := t.lookupID(b)
	if id == 0 {
		return 0, ""
	}
	return id, t.str(id)
}

// str returns the string of name number id.
func (t *nameTable) str(id int32) string { return t.strs[id-t.base-1] }

// add numbers b, which lookup did not find, and returns its number and
// string.
func (t *nameTable) add(b []byte) (int32, string) {
	if 2*(len(t.strs)+1) > len(t.cells) {
		t.grow()
	}
	if t.block.Cap()-t.block.Len() < len(b) {
		t.block = strings.Builder{}
		t.block.Grow(max(nameBlock, len(b)))
	}
	start := t.block.Len()
	t.block.Write(b)
	s := t.block.String()[start:]
	t.count++
	t.strs = append(t.strs, s)
	t.put(s, t.count)
	return t.count, s
}

// nameBlock is the size of the blocks of text names are cut from.
const nameBlock = 16 << 10

func (t *nameTable) put(s string, id int32) {
	h := maphash.String(t.seed, s)
	mask := len(t.cells) - 1
	i := int(h) & mask
	for t.cells[i].id != 0 {
		i = (i + 1) & mask
	}
	var head [8]byte
	copy(head[:], s)
	t.cells[i] = nameCell{head: head, key: cellKey(h, len(s)), id: id}
}

func (t *nameTable) grow() {
	t.cells = make([]nameCell, 2*len(t.cells))
	for i, s := range t.strs {
		t.put(s, t.base+int32(i)+1)
	}
}
