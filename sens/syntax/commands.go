package syntax

// The commands of the language, one parse function per verb. Each function's
// doc comment carries its production, word for word as in the grammar at the
// top of parser.go (a test checks both). A command's options (key=value
// after it) are parsed for every verb by parseCommand; which keys a command
// takes is the business of whoever runs it.

// CommandForm is how one command is written.
type CommandForm struct {
	Verb string
	// Form is the command as a person writes it, options aside:
	// "sweep OUT over X a..b [and Y c..d]".
	Form  string
	parse func(p *parser, c *CommandStmt)
}

// commandForms is the one table of the commands the parser knows. The
// kernel's table says how each runs; a test there checks that both name the
// same verbs.
var commandForms = []CommandForm{
	{"drivers", "drivers OUT", (*parser).parseDrivers},
	{"tornado", "tornado OUT", (*parser).parseTornado},
	{"explore", "explore OUT [over X, Y, ...]", (*parser).parseExplore},
	{"spider", "spider OUT [(±P%) | over ranges]", (*parser).parseSpider},
	{"sweep", "sweep OUT over X a..b [and Y c..d]", (*parser).parseSweep},
	{"breakeven", "breakeven OUT = T over X [a..b]", (*parser).parseBreakeven},
	{"scenario", "scenario NAME: X = v, Y = w", (*parser).parseScenario},
	{"compare", "compare OUT across base, NAME, ...", (*parser).parseCompare},
	{"attribute", "attribute OUT from A to B", (*parser).parseAttribute},
	{"exchange", "exchange CODE = RATE [CURRENCY]", (*parser).parseExchange},
	{"basis", "basis [OUT]", (*parser).parseBasis},
	{"simulate", "simulate OUT", (*parser).parseGlobal},
	{"sobol", "sobol OUT", (*parser).parseGlobal},
	{"morris", "morris OUT", (*parser).parseGlobal},
	{"screen", "screen OUT", (*parser).parseGlobal},
	{"interactions", "interactions OUT", (*parser).parseInteractions},
	{"spearman", "spearman X, Y = RHO", (*parser).parseSpearman},
	{"print", `print "text"`, (*parser).parsePrint},
	{"reset", "reset", (*parser).parseReset},
	{"charts", "charts svg | png | text", (*parser).parseCharts},
	{"help", "help [COMMAND]", (*parser).parseHelp},
}

// Verbs are the words that start a command when the next token is not '=',
// in the order of the grammar.
var Verbs = func() []string {
	v := make([]string, len(commandForms))
	for i, f := range commandForms {
		v[i] = f.Verb
	}
	return v
}()

// Command returns how the command verb is written, or nil when verb is not
// a command.
func Command(verb string) *CommandForm {
	for i := range commandForms {
		if commandForms[i].Verb == verb {
			return &commandForms[i]
		}
	}
	return nil
}

// IsVerb reports whether name is a command verb.
func IsVerb(name string) bool { return Command(name) != nil }

// parseCommand parses a command and its options:
//
//	command = ( drivers | tornado | explore | spider | sweep | breakeven | scenario | compare
//	          | attribute | exchange | basis | global | spearman | print | reset | charts
//	          | help | interactions ) options .
//	options = { name "=" arith } .
func (p *parser) parseCommand() *CommandStmt {
	c := &CommandStmt{Verb: p.lit, VerbPos: p.pos}
	form := Command(c.Verb)
	p.next()
	form.parse(p, c)
	for p.tok == IDENT && p.peek(1) == ASSIGN {
		o := &Option{Key: p.parseIdent()}
		p.next()
		o.Value = p.parseArith()
		c.Options = append(c.Options, o)
	}
	if !p.atEnd() {
		if p.tok == IDENT {
			p.error(p.pos, "unexpected "+p.describe()+" after "+c.Verb+" (options are written key=value)")
		}
		p.errorExpected("end of line")
	}
	c.EndAt = p.pos
	return c
}

// parseOutput parses the output a command analyses: a name or an arithmetic
// expression.
func (p *parser) parseOutput(c *CommandStmt) {
	if p.atEnd() {
		p.error(p.pos, c.Verb+" needs an output: "+c.Verb+" NAME")
	}
	c.Output = p.parseArith()
}

// parseDrivers parses the ranked local effects of every input:
//
//	drivers = "drivers" arith .
func (p *parser) parseDrivers(c *CommandStmt) { p.parseOutput(c) }

// parseTornado parses the output at the ends of each input's range:
//
//	tornado = "tornado" arith .
func (p *parser) parseTornado(c *CommandStmt) { p.parseOutput(c) }

// parseExplore parses the what-if panel of an output, whose sliders move
// the inputs named after over (into c.Names), or else the inputs with the
// largest swings:
//
//	explore = "explore" arith [ "over" ref { "," ref } ] .
func (p *parser) parseExplore(c *CommandStmt) {
	p.parseOutput(c)
	if p.tok != IDENT || p.lit != "over" || p.peek(1) == ASSIGN {
		return
	}
	p.next()
	for {
		if p.tok != IDENT {
			p.error(p.pos, "expected an input after 'over', found "+p.describe()+" (write: explore "+exprString(c.Output)+" over X, Y)")
		}
		c.Names = append(c.Names, p.parseRef())
		if p.tok != COMMA {
			return
		}
		p.next()
	}
}

// parseGlobal parses an uncertainty or global-sensitivity analysis of an
// output (its size, seed and other settings are options):
//
//	global = ( "simulate" | "sobol" | "morris" | "screen" ) arith .
func (p *parser) parseGlobal(c *CommandStmt) { p.parseOutput(c) }

// parseInteractions parses the ranking of pairs of inputs by their mixed
// second derivatives:
//
//	interactions = "interactions" arith .
func (p *parser) parseInteractions(c *CommandStmt) { p.parseOutput(c) }

// parseSpearman parses the declaration of a rank correlation between two
// inputs, into c.Names (the inputs) and c.Target (the coefficient):
//
//	spearman = "spearman" ref "," ref "=" arith .
func (p *parser) parseSpearman(c *CommandStmt) {
	const form = "spearman INPUT, INPUT = COEFFICIENT"
	if p.atEnd() {
		p.error(p.pos, "spearman needs two inputs and a coefficient: "+form)
	}
	a := p.parseRef()
	if p.tok != COMMA {
		p.errorExpected("',' and a second input (write: " + form + ")")
	}
	p.next()
	b := p.parseRef()
	if p.tok != ASSIGN {
		p.errorExpected("'=' and the rank correlation of " + a.Name + " and " + b.Name + " (write: " + form + ")")
	}
	p.next()
	if p.atEnd() {
		p.errorExpected("a coefficient between -1 and 1")
	}
	c.Names = []*Ident{a, b}
	c.Target = p.parseArith()
}

// parseSpider parses the output against a change of each input: a
// percentage over a range symmetric about 0% (Percent is nil when none is
// written), or each input over its own range (Name is "ranges"):
//
//	spider = "spider" name [ range | "over" "ranges" ] .
func (p *parser) parseSpider(c *CommandStmt) {
	c.Output = p.parseRef()
	if p.tok == IDENT && p.lit == "over" {
		p.next()
		if p.tok != IDENT || p.lit != "ranges" {
			p.errorExpected("'ranges' (write: spider " + exprString(c.Output) + " over ranges)")
		}
		c.Name = p.parseIdent()
		return
	}
	if p.tok != LPAREN {
		return
	}
	r := p.parseRange()
	if !r.Low.Percent {
		p.error(r.Lparen, "spider takes a percentage range such as (±30%), or over ranges for each input's own range")
	}
	if r.Low.Value >= 0 || r.High.Value <= 0 || r.Low.Value != -r.High.Value {
		p.error(r.Lparen, "spider takes a range symmetric about 0%, such as (±30%), found ("+r.Low.Lit+".."+r.High.Lit+"); over ranges takes each input's own range")
	}
	c.Percent = r
}

// parseSweep parses a sweep of one or two inputs over ranges:
//
//	sweep = "sweep" arith "over" axis [ "and" axis ] .
//	axis  = name arith ".." arith .
func (p *parser) parseSweep(c *CommandStmt) {
	c.Output = p.parseArith()
	p.expectWord("over", "sweep "+exprString(c.Output)+" over INPUT LOW..HIGH")
	c.Axes = append(c.Axes, p.parseAxis(true))
	if p.tok == AND {
		p.next()
		c.Axes = append(c.Axes, p.parseAxis(true))
	}
}

// parseBreakeven parses a search for the values of one input where the
// output reaches a target, over the input's whole domain unless a range is
// written:
//
//	breakeven = "breakeven" arith "=" arith "over" name [ arith ".." arith ] .
func (p *parser) parseBreakeven(c *CommandStmt) {
	c.Output = p.parseArith()
	if p.tok != ASSIGN {
		p.errorExpected("'=' and a target: breakeven " + exprString(c.Output) + " = TARGET over INPUT")
	}
	p.next()
	c.Target = p.parseArith()
	p.expectWord("over", "breakeven "+exprString(c.Output)+" = TARGET over INPUT")
	c.Axes = append(c.Axes, p.parseAxis(false))
}

// parseScenario parses a named set of input values:
//
//	scenario = "scenario" name ":" name "=" arith { "," name "=" arith } .
func (p *parser) parseScenario(c *CommandStmt) {
	c.Name = p.parseIdent()
	if p.tok != COLON {
		p.errorExpected("':' and settings: scenario " + c.Name.Name + ": x = 1, y = 2")
	}
	p.next()
	for {
		a := &Assign{Name: p.parseRef()}
		if p.tok != ASSIGN {
			p.errorExpected("'=' after " + a.Name.Name)
		}
		p.next()
		a.Value = p.parseArith()
		c.Assigns = append(c.Assigns, a)
		if p.tok != COMMA {
			return
		}
		p.next()
	}
}

// parseCompare parses the output across scenarios, "base" the baseline:
//
//	compare = "compare" arith "across" name { "," name } .
func (p *parser) parseCompare(c *CommandStmt) {
	c.Output = p.parseArith()
	p.expectWord("across", "compare "+exprString(c.Output)+" across base, NAME")
	for {
		c.Names = append(c.Names, p.parseIdent())
		if p.tok != COMMA {
			return
		}
		p.next()
	}
}

// parseAttribute parses the change of an output from one scenario to
// another ("base" the baseline), into c.Names (the two scenarios):
//
//	attribute = "attribute" arith "from" name "to" name .
func (p *parser) parseAttribute(c *CommandStmt) {
	p.parseOutput(c)
	out := exprString(c.Output)
	p.expectWord("from", "attribute "+out+" from base to NAME")
	if p.tok != IDENT {
		p.error(p.pos, "expected a scenario or base after 'from', found "+p.describe()+" (write: attribute "+out+" from base to NAME)")
	}
	from := p.parseIdent()
	p.expectWord("to", "attribute "+out+" from "+from.Name+" to NAME")
	if p.tok != IDENT {
		p.error(p.pos, "expected a scenario or base after 'to', found "+p.describe()+" (write: attribute "+out+" from "+from.Name+" to NAME)")
	}
	c.Names = []*Ident{from, p.parseIdent()}
}

// parseExchange parses an exchange rate, the worth of one unit of a currency
// in another, which lets the two mix:
//
//	exchange = "exchange" name "=" arith .
func (p *parser) parseExchange(c *CommandStmt) {
	if p.tok != IDENT {
		p.errorExpected("a currency code: exchange EUR = 1.08 [$]")
	}
	a := &Assign{Name: p.parseIdent()}
	if p.tok != ASSIGN {
		p.errorExpected("'=' and a rate: exchange " + a.Name.Name + " = 1.08 [$]")
	}
	p.next()
	if p.atEnd() {
		p.errorExpected("a rate with its currency: exchange " + a.Name.Name + " = 1.08 [$]")
	}
	a.Value = p.parseArith()
	c.Assigns = append(c.Assigns, a)
}

// parseBasis parses the basis of estimate, every input (or every input of
// an output) and where its value and range came from:
//
//	basis = "basis" [ arith ] .
func (p *parser) parseBasis(c *CommandStmt) {
	if !p.atEnd() && !(p.tok == IDENT && p.peek(1) == ASSIGN) {
		c.Output = p.parseArith()
	}
}

// parseHelp parses a request for the command reference, or for one command:
//
//	help = "help" [ name ] .
func (p *parser) parseHelp(c *CommandStmt) {
	if p.tok == IDENT && p.peek(1) != ASSIGN {
		c.Name = p.parseIdent()
	}
}

// parsePrint parses a line of text for standard output:
//
//	print = "print" STRING .
func (p *parser) parsePrint(c *CommandStmt) {
	if p.tok != STRING {
		p.errorExpected(`text in double quotes: print "text"`)
	}
	c.Text = p.lit
	p.next()
}

// parseReset parses the command that forgets the model:
//
//	reset = "reset" .
func (p *parser) parseReset(*CommandStmt) {}

// parseCharts parses how later results draw their charts (the name is
// checked by whoever runs the command):
//
//	charts = "charts" name .
func (p *parser) parseCharts(c *CommandStmt) { c.Name = p.parseIdent() }

func (p *parser) expectWord(word, form string) {
	if p.tok != IDENT || p.lit != word {
		p.error(p.pos, "expected '"+word+"', found "+p.describe()+" (write: "+form+")")
	}
	p.next()
}

// parseAxis parses an input and its range; the range is required when need
// is set.
func (p *parser) parseAxis(need bool) *Axis {
	a := &Axis{Name: p.parseRef()}
	if !need && (p.atEnd() || p.tok == IDENT && p.peek(1) == ASSIGN) {
		return a
	}
	a.Low = p.parseArith()
	if p.tok != DOTDOT {
		p.errorExpected("'..' between the ends of the range (" + a.Name.Name + " LOW..HIGH)")
	}
	p.next()
	a.High = p.parseArith()
	return a
}
