package syntax

import "strings"

// The forms of line-item models: tables loaded from CSV files, ranges of
// periods, vector inputs over them, and references to a table's columns
// and to single elements of a vector.
//
//	table parts = "parts.csv" key item     # columns parts.qty, parts.price, ...
//	periods year = 1..25                   # the vector year = 1, 2, ..., 25
//	input qty = parts.qty (±10%)            # one input per row: qty[bracket-12], ...
//	input om[year] = 120000 [$] (±15%)     # one input per period: om[1], ...
//	cost = qty * parts.price                # element by element
//	total = sum(cost)
//	bolts = qty[bracket-12] * 2             # one element

// parseLineItems parses a table or periods statement; the statement's
// word is at hand and a name follows it.
//
//	table   = "table" name "=" STRING [ "key" name ] .
//	periods = "periods" name "=" arith ".." arith .
func (p *parser) parseLineItems() Stmt {
	word, pos := p.lit, p.pos
	p.next()
	name := p.parseIdent()
	if strings.Contains(name.Name, ".") {
		p.error(name.Pos(), "a "+word+" name has no dot: "+word+" "+strings.ReplaceAll(name.Name, ".", "_")+" = ...")
	}
	if p.tok != ASSIGN {
		p.errorExpected("'=' after " + word + " " + name.Name)
	}
	p.next()
	if word == "periods" {
		s := &PeriodsStmt{Periods: pos, Name: name}
		if p.atEnd() {
			p.error(p.pos, "expected the first and last period: periods "+name.Name+" = 1..20")
		}
		s.First = p.parseArith()
		if p.tok != DOTDOT {
			p.errorExpected("'..' between the first and last period (periods " + name.Name + " = 1..20)")
		}
		p.next()
		s.Last = p.parseArith()
		s.EndAt = p.pos
		return s
	}
	s := &TableStmt{Table: pos, Name: name}
	if p.tok != STRING {
		p.errorExpected(`the file name in double quotes: table ` + name.Name + ` = "lines.csv"`)
	}
	s.Path = &StringLit{ValuePos: p.pos, Value: p.lit, Lit: string(p.file.Src[p.file.Offset(p.pos):p.file.Offset(p.stringEnd())])}
	if strings.TrimSpace(s.Path.Value) == "" {
		p.error(p.pos, "the file name is empty")
	}
	p.next()
	if p.tok == IDENT && p.lit == "key" {
		p.next()
		if p.tok != IDENT {
			p.errorExpected("the name of the key column after key")
		}
		s.Key = p.parseIdent()
	}
	if !p.atEnd() {
		p.errorExpected(`end of line or key COLUMN (table ` + name.Name + ` = "file.csv" key COLUMN)`)
	}
	s.EndAt = p.pos
	return s
}

// parseRef parses a name as a reference: a name, a column table.column, or
// an element name[key], the bracket right after the name.
//
//	ref = name [ UNIT ] .
func (p *parser) parseRef() *Ident {
	id := p.parseIdent()
	if p.tok == UNIT && p.pos == id.End() {
		key := strings.TrimSpace(p.lit)
		if key == "" {
			p.error(p.pos, "expected a key between the brackets: "+id.Name+"[KEY] (or leave a space before a unit: "+id.Name+" [UNIT])")
		}
		id.brack = int32(p.pos + Pos(len(p.lit)) + 1 - id.NamePos)
		id.ID, id.Name = p.file.intern(id.Name + "[" + key + "]")
		p.next()
	}
	return id
}

// parseOver parses the table or periods a vector input is over: the
// bracket right after the input's name.
//
//	over = UNIT .
func (p *parser) parseOver(name *Ident) *Ident {
	text := strings.TrimSpace(p.lit)
	lead := len(p.lit) - len(strings.TrimLeft(p.lit, " \t"))
	id := &Ident{NamePos: p.pos + 1 + Pos(lead), Name: text}
	if isName(text) {
		id.ID, id.Name = p.file.intern(text)
	}
	if text == "" || !isName(text) {
		p.error(p.pos, "expected the name of a table or periods in the brackets: input "+name.Name+"[year] = ... (a unit follows the value: input "+name.Name+" = 5 ["+text+"])")
	}
	p.next()
	return id
}

// isName reports whether s is a name of the language.
func isName(s string) bool {
	for i, r := range s {
		if !isLetter(r) && (i == 0 || !isDigit(r)) {
			return false
		}
	}
	return s != ""
}

// stringEnd returns the position just past the STRING token at hand, its
// closing quote included.
func (p *parser) stringEnd() Pos {
	src := p.file.Src
	i := p.file.Offset(p.pos) + 1
	for i < len(src) && src[i] != '\n' {
		switch src[i] {
		case '\\':
			i++
		case '"':
			return p.file.Pos(i + 1)
		}
		i++
	}
	return p.file.Pos(min(i, len(src)))
}
