package kernel

import (
	"fmt"
	"sort"
	"strings"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens/syntax"
)

var helpCommand = &Command{
	Verb:    "help",
	Doc:     "the command reference, or one command's form, options and example",
	Example: "help tornado",
}

// runHelp reads the command table, which lists help: it is set here to
// break the initialisation cycle.
func init() { helpCommand.run = runHelp }

// HelpCommand is one command in the JSON of help.
type HelpCommand struct {
	Verb    string       `json:"verb"`
	Usage   string       `json:"usage"`
	Doc     string       `json:"doc"`
	Example string       `json:"example"`
	Options []HelpOption `json:"options,omitempty"`
}

// HelpOption is one option of a command in the JSON of help.
type HelpOption struct {
	Form string `json:"form"`
	Doc  string `json:"doc"`
}

// HelpResult is the result of help.
type HelpResult struct {
	Kind     string        `json:"kind"` // "help"
	Commands []HelpCommand `json:"commands"`
}

// runHelp runs "help [COMMAND]".
func runHelp(x *call) error {
	res := &HelpResult{Kind: "help"}
	if id := x.c.Name; id != nil {
		c := commands[id.Name]
		if c == nil {
			known := make([]string, 0, len(commands))
			for v := range commands {
				known = append(known, v)
			}
			sort.Strings(known)
			hint := syntax.DidYouMean(id.Name, known)
			if hint == "" {
				hint = " (commands: " + strings.Join(known, ", ") + ")"
			}
			return x.errorf(id.Pos(), "no command %s%s", id.Name, hint)
		}
		res.Commands = []HelpCommand{helpOf(c)}
		x.show(render.Preformatted("help", res, helpText(res, true)))
		return nil
	}
	for _, v := range syntax.Verbs {
		if c := commands[v]; c != nil {
			res.Commands = append(res.Commands, helpOf(c))
		}
	}
	x.show(render.Preformatted("help", res, helpText(res, false)))
	return nil
}

func helpOf(c *Command) HelpCommand {
	h := HelpCommand{Verb: c.Verb, Usage: c.Usage(), Doc: c.Doc, Example: c.Example}
	for _, o := range c.Options {
		doc := o.Doc
		if o.Max > 0 {
			doc += "; at most " + count(o.Max)
		}
		h.Options = append(h.Options, HelpOption{Form: o.Form(), Doc: doc})
	}
	return h
}

// helpText writes the reference: a line per command, or one command in
// full.
func helpText(h *HelpResult, one bool) string {
	var b strings.Builder
	if one {
		c := h.Commands[0]
		fmt.Fprintf(&b, "%s\n  %s\n  example: %s\n", c.Usage, c.Doc, c.Example)
		for _, o := range c.Options {
			fmt.Fprintf(&b, "  %-10s %s\n", o.Form, o.Doc)
		}
		return strings.TrimRight(b.String(), "\n")
	}
	b.WriteString("commands (a line that starts with the command word; help COMMAND for one):\n")
	w := 0
	for _, c := range h.Commands {
		w = max(w, len([]rune(c.Usage)))
	}
	for _, c := range h.Commands {
		fmt.Fprintf(&b, "  %s%s  %s\n", c.Usage, strings.Repeat(" ", w-len([]rune(c.Usage))), c.Doc)
	}
	b.WriteString("declarations: input NAME = VALUE [UNIT] (RANGE) ~ DIST(...), NAME = FORMULA [UNIT]; the language reference is in the README")
	return b.String()
}
