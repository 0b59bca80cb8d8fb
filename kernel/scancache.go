package kernel

import (
	"sync"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// scanCache keeps what the last text a console asked about gave when
// scanned and parsed. A console asks is_complete, complete and inspect about
// the same text one request after another (and complete again at each Tab):
// each text is tokenized for is_complete once, parsed once for both
// is_complete's answer and the names a completion offers, and the line before
// the cursor lexed once, so that a long cell (a megabyte of stray characters
// pasted in) is scanned a bounded number of times, however many requests
// name it. One text of each kind is kept.
type scanCache struct {
	mu sync.Mutex

	incCode string // the text of inc
	inc     bool   // syntax.Incomplete(incCode)
	incOK   bool

	// parsed are the last two texts parsed: the cell, and the line before
	// the cursor where it is a command (commandCandidates), most recent
	// first.
	parsed [2]*parsedText

	lexLine string // the text of lex
	lex     []lexeme
	lexOK   bool

	// scanned counts the bytes given to the scanner and the parser, for
	// tests of the work a request does.
	scanned int
}

func (c *scanCache) incomplete(code string) bool {
	c.mu.Lock()
	defer c.mu.Unlock()
	if !c.incOK || c.incCode != code {
		c.scanned += len(code)
		c.incCode, c.inc, c.incOK = code, syntax.Incomplete(code), true
	}
	return c.inc
}

// parsedText is a text and what syntax.Parse gave of it.
type parsedText struct {
	code  string
	stmts []syntax.Stmt
	err   error
}

func (c *scanCache) parse(code string) ([]syntax.Stmt, error) {
	c.mu.Lock()
	defer c.mu.Unlock()
	p := c.parsed[0]
	switch {
	case p != nil && p.code == code:
	case c.parsed[1] != nil && c.parsed[1].code == code:
		p = c.parsed[1]
		c.parsed[0], c.parsed[1] = p, c.parsed[0]
	default:
		c.scanned += len(code)
		_, stmts, err := syntax.Parse("", []byte(code))
		p = &parsedText{code, stmts, err}
		c.parsed[0], c.parsed[1] = p, c.parsed[0]
	}
	return p.stmts, p.err
}

func (c *scanCache) lexemes(line string) []lexeme {
	c.mu.Lock()
	defer c.mu.Unlock()
	if !c.lexOK || c.lexLine != line {
		c.scanned += len(line)
		c.lexLine, c.lex, c.lexOK = line, lexemes(line), true
	}
	return c.lex
}
