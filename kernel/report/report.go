// Package report writes a notebook that nudge ran as one self-contained HTML
// page: the facts that make it reproducible first (the tool's version, the
// SHA-256 of the model text and of every data file the model read, every
// seed, the caution), then the notebook's markdown and results in order.
//
// The page loads nothing: its CSS is embedded, charts are inline SVG, other
// images are data URIs, and a markdown image that points elsewhere is shown
// as its text and address instead. Each output is written in its richest
// representation that a page can show (HTML, with any scripts it carries,
// then SVG, PNG, JPEG, GIF, markdown, plain text), so an interactive output
// works in the report as in the notebook; a script that outputs mark as needed
// once (the what-if panel's) is written once, at the end of the body. The same
// notebook gives the same
// bytes; a time stamp is added only when Facts.Generated is set.
//
// The package imports nothing of the kernel but the notebook format, so the
// command line builds reports from notebooks whoever ran them.
package report

import (
	"bytes"
	"crypto/sha256"
	"encoding/base64"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"html"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/ast"
	"github.com/yuin/goldmark/extension"
	"github.com/yuin/goldmark/renderer"
	"github.com/yuin/goldmark/text"
	"github.com/yuin/goldmark/util"

	"github.com/nudge-dev/nudge/kernel/notebook"
)

// ResultMIME is the vendor MIME type of nudge's result objects.
const ResultMIME = "application/vnd.nudge.result+json"

// Caution is the caution a report opens with.
const Caution = "A sensitivity result describes the model, not the world: it holds only within the stated ranges and distributions, one-at-a-time charts miss interactions, and a cost model is not a quote. Defer to your organisation's estimating standards, and to licensed professionals for any decision that affects safety."

// Facts are what a report says about its own making.
type Facts struct {
	// Title heads the page; the notebook's first heading when empty,
	// else Source.
	Title string
	// Tool is the program and version that ran the notebook ("nudge 0.9").
	Tool string
	// Source is the name of the notebook or model file, and SourceSHA256
	// the SHA-256 of its bytes.
	Source       string
	SourceSHA256 string
	// Replaced is set when the run wrote its executed notebook over Source,
	// so that the hash is of the file as it was read, not as it is now.
	Replaced bool
	// Model says what the model text is ("the 12 code cells, in order")
	// and ModelSHA256 is its SHA-256.
	Model       string
	ModelSHA256 string
	// Files are the data files the model read, in the order read.
	Files []File
	// Seeds are the seeds of the sampling analyses, in the order run.
	Seeds []Seed
	// Rerun is the command that makes the report again.
	Rerun string
	// Generated is a time stamp; left out when empty.
	Generated string
	// Dir is where the notebook's relative image paths are found.
	Dir string
}

// File is a data file the model read.
type File struct {
	Path   string `json:"path"`
	SHA256 string `json:"sha256"`
	Cell   int    `json:"cell"` // the execution count of the cell that read it
}

// Seed is the seed of one sampling analysis.
type Seed struct {
	Cell   int    `json:"cell"`
	Kind   string `json:"kind"`
	Output string `json:"output"`
	Seed   uint64 `json:"seed"`
}

// SHA256 returns the hex SHA-256 of data.
func SHA256(data []byte) string {
	s := sha256.Sum256(data)
	return hex.EncodeToString(s[:])
}

// Collect finds, in the notebook's outputs, the data files the model read
// (the "table" results, with the SHA-256 of the bytes read) and the seeds of
// the sampling analyses, in order. A file read twice with the same bytes is
// listed once.
func Collect(nb *notebook.Notebook) (files []File, seeds []Seed) {
	seen := map[File]bool{}
	for _, c := range nb.Cells {
		if c.Type != "code" {
			continue
		}
		n := 0
		if c.ExecutionCount != nil {
			n = *c.ExecutionCount
		}
		for _, o := range c.Outputs {
			obj, ok := o.Data[ResultMIME].(map[string]any)
			if !ok {
				continue
			}
			kind, _ := obj["kind"].(string)
			if kind == "table" {
				path, _ := obj["path"].(string)
				sum, _ := obj["sha256"].(string)
				f := File{Path: path, SHA256: sum}
				if !seen[f] {
					seen[f] = true
					f.Cell = n
					files = append(files, f)
				}
			}
			if s, ok := number(obj["seed"]); ok {
				out, _ := obj["output"].(string)
				seeds = append(seeds, Seed{Cell: n, Kind: kind, Output: out, Seed: s})
			}
		}
	}
	return files, seeds
}

func number(v any) (uint64, bool) {
	switch v := v.(type) {
	case json.Number:
		var s uint64
		_, err := fmt.Sscan(v.String(), &s)
		return s, err == nil
	case float64:
		return uint64(v), v >= 0
	}
	return 0, false
}

// Write writes the report of nb to w.
func Write(w io.Writer, nb *notebook.Notebook, f *Facts) error {
	r := &writer{nb: nb, f: f, md: newMarkdown()}
	var b bytes.Buffer
	r.page(&b)
	_, err := w.Write(b.Bytes())
	return err
}

type writer struct {
	nb *notebook.Notebook
	f  *Facts
	md goldmark.Markdown
	// once holds the script elements marked to be written once (see
	// gatherOnce), in the order first met, and onceSeen each one's text.
	once     []string
	onceSeen map[string]bool
}

// onceOpen opens a script element that a page needs once however many
// outputs carry it (the what-if panel's evaluator marks itself so, as
// kernel/render.ScriptOnce; this package imports nothing of the kernel).
const onceOpen = `<script data-nudge-once="`

// gatherOnce takes out of an output's HTML the script elements marked to be
// written once, keeping the first of each distinct element for the end of
// the page's body: there it runs after every output is in the page, and sets
// up all those it serves. A report of ten what-if panels carries their
// evaluator once, not ten times. Elements that differ (two versions of a
// script) are each kept. The scan is linear in the HTML.
func (r *writer) gatherOnce(h string) string {
	if !strings.Contains(h, onceOpen) {
		return h
	}
	var b strings.Builder
	b.Grow(len(h))
	for {
		i := strings.Index(h, onceOpen)
		if i < 0 {
			break
		}
		j := strings.Index(h[i:], "</script>")
		if j < 0 {
			break
		}
		end := i + j + len("</script>")
		el := h[i:end]
		b.WriteString(h[:i])
		if !r.onceSeen[el] {
			if r.onceSeen == nil {
				r.onceSeen = map[string]bool{}
			}
			r.onceSeen[el] = true
			r.once = append(r.once, el)
		}
		h = h[end:]
	}
	b.WriteString(h)
	return b.String()
}

func (r *writer) title() string {
	if r.f.Title != "" {
		return r.f.Title
	}
	for _, c := range r.nb.Cells {
		if c.Type != "markdown" {
			continue
		}
		for _, line := range strings.Split(c.Source, "\n") {
			if t, ok := strings.CutPrefix(strings.TrimSpace(line), "# "); ok {
				return strings.TrimSpace(t)
			}
		}
	}
	return r.f.Source
}

// failure returns the cell that failed and its error output, if any.
func (r *writer) failure() (*notebook.Cell, *notebook.Output) {
	for _, c := range r.nb.Cells {
		for _, o := range c.Outputs {
			if o.Type == "error" {
				return c, o
			}
		}
	}
	return nil, nil
}

func (r *writer) page(b *bytes.Buffer) {
	esc := html.EscapeString
	title := r.title()
	b.WriteString("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
	b.WriteString("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
	b.WriteString("<meta name=\"generator\" content=\"" + esc(r.f.Tool) + "\">\n")
	b.WriteString("<title>" + esc(title) + "</title>\n<style>\n" + css + "</style>\n</head>\n<body>\n")

	// The facts.
	b.WriteString("<header class=\"nudge-facts\">\n<h1>" + esc(title) + "</h1>\n")
	b.WriteString("<p class=\"nudge-sub\">A report of " + esc(r.f.Source) + ", run by " + esc(r.f.Tool) + ".</p>\n")
	if c, o := r.failure(); c != nil {
		fmt.Fprintf(b, "<p class=\"nudge-status nudge-failed\">This run stopped at <a href=\"#%s\">cell [%d]</a>: %s. The cells after it did not run.</p>\n",
			esc(cellAnchor(c)), count(c), esc(stripANSI(o.Ename+": "+o.Evalue)))
	} else {
		fmt.Fprintf(b, "<p class=\"nudge-status\">Every code cell ran (%d).</p>\n", r.ran())
	}
	b.WriteString("<table class=\"nudge-facts-table\">\n<tbody>\n")
	row := func(k, v string) { b.WriteString("<tr><th scope=\"row\">" + k + "</th><td>" + v + "</td></tr>\n") }
	row("Tool", esc(r.f.Tool))
	replaced := ""
	if r.f.Replaced {
		replaced = "<br>as read, before this run wrote the executed notebook over it (the model text's hash stays the same)"
	}
	row("Source", esc(r.f.Source)+"<br><code class=\"nudge-hash\">SHA-256 "+esc(r.f.SourceSHA256)+"</code>"+replaced)
	row("Model text", esc(r.f.Model)+"<br><code class=\"nudge-hash\">SHA-256 "+esc(r.f.ModelSHA256)+"</code>")
	if len(r.f.Files) == 0 {
		row("Data files", "none")
	} else {
		var fb strings.Builder
		fb.WriteString("<ul>")
		for _, f := range r.f.Files {
			fmt.Fprintf(&fb, "<li>%s (cell [%d])<br><code class=\"nudge-hash\">SHA-256 %s</code></li>", esc(f.Path), f.Cell, esc(f.SHA256))
		}
		fb.WriteString("</ul>")
		row("Data files", fb.String())
	}
	if len(r.f.Seeds) == 0 {
		row("Seeds", "none (no sampling analysis)")
	} else {
		var sb strings.Builder
		sb.WriteString("<ul>")
		for _, s := range r.f.Seeds {
			what := s.Kind
			if s.Output != "" {
				what += " of " + s.Output
			}
			fmt.Fprintf(&sb, "<li>seed %d: %s (cell [%d])</li>", s.Seed, esc(what), s.Cell)
		}
		sb.WriteString("</ul>")
		row("Seeds", sb.String())
	}
	if r.f.Rerun != "" {
		row("To run again", "<code>"+esc(r.f.Rerun)+"</code>")
	}
	if r.f.Generated != "" {
		row("Generated", esc(r.f.Generated))
	}
	b.WriteString("</tbody>\n</table>\n")
	b.WriteString("<p class=\"nudge-caution-top\"><strong>Caution.</strong> " + esc(Caution) + "</p>\n")
	b.WriteString("</header>\n<main>\n")

	// The notebook, in sections: a new one at each markdown cell that
	// opens with a heading of level 1 or 2.
	open := false
	ran := true
	for i, c := range r.nb.Cells {
		if !open || c.Type == "markdown" && opensSection(c.Source) {
			if open {
				b.WriteString("</section>\n")
			}
			b.WriteString("<section class=\"nudge-part\">\n")
			open = true
		}
		switch c.Type {
		case "markdown":
			b.WriteString("<div class=\"nudge-md\">\n")
			b.WriteString(r.markdown(c))
			b.WriteString("</div>\n")
		case "code":
			if strings.TrimSpace(c.Source) == "" {
				continue
			}
			r.codeCell(b, i, c, ran)
			for _, o := range c.Outputs {
				if o.Type == "error" {
					ran = false
				}
			}
		case "raw":
			b.WriteString("<pre class=\"nudge-raw\">" + esc(c.Source) + "</pre>\n")
		}
	}
	if open {
		b.WriteString("</section>\n")
	}
	b.WriteString("</main>\n")
	for _, el := range r.once {
		b.WriteString(el)
		b.WriteString("\n")
	}
	b.WriteString("</body>\n</html>\n")
}

func (r *writer) ran() int {
	n := 0
	for _, c := range r.nb.Cells {
		if c.Type == "code" && c.ExecutionCount != nil {
			n++
		}
	}
	return n
}

func count(c *notebook.Cell) int {
	if c.ExecutionCount == nil {
		return 0
	}
	return *c.ExecutionCount
}

func cellAnchor(c *notebook.Cell) string {
	return "cell-" + c.ID
}

// opensSection reports whether markdown starts with a heading of level 1
// or 2.
func opensSection(src string) bool {
	s := strings.TrimLeft(src, " \n")
	return strings.HasPrefix(s, "# ") || strings.HasPrefix(s, "## ")
}

func (r *writer) codeCell(b *bytes.Buffer, i int, c *notebook.Cell, ran bool) {
	esc := html.EscapeString
	prompt := "[ ]"
	if c.ExecutionCount != nil {
		prompt = fmt.Sprintf("[%d]", *c.ExecutionCount)
	}
	fmt.Fprintf(b, "<div class=\"nudge-cell\" id=\"%s\">\n", esc(cellAnchor(c)))
	fmt.Fprintf(b, "<div class=\"nudge-in\"><span class=\"nudge-prompt\">%s</span><pre class=\"nudge-source\">%s</pre></div>\n", prompt, esc(strings.TrimRight(c.Source, "\n")))
	if c.ExecutionCount == nil && !ran {
		b.WriteString("<p class=\"nudge-notrun\">Not run: an earlier cell failed.</p>\n")
	}
	for _, o := range c.Outputs {
		r.output(b, c, o)
	}
	b.WriteString("</div>\n")
}

// imageTypes are the image types a page shows from a data URI, richest
// first after SVG.
var imageTypes = []string{"image/png", "image/jpeg", "image/gif", "image/webp"}

func (r *writer) output(b *bytes.Buffer, c *notebook.Cell, o *notebook.Output) {
	esc := html.EscapeString
	switch o.Type {
	case "stream":
		fmt.Fprintf(b, "<pre class=\"nudge-stream nudge-%s\">%s</pre>\n", esc(o.Name), esc(stripANSI(o.Text)))
		return
	case "error":
		b.WriteString("<div class=\"nudge-error\" role=\"alert\">\n")
		fmt.Fprintf(b, "<p class=\"nudge-error-head\">Cell [%d] failed: %s</p>\n", count(c), esc(stripANSI(o.Ename+": "+o.Evalue)))
		b.WriteString("<pre>" + esc(stripANSI(strings.Join(o.Traceback, "\n"))) + "</pre>\n</div>\n")
		return
	}
	b.WriteString("<div class=\"nudge-output\">\n")
	switch {
	case o.DataText("text/html") != "":
		b.WriteString(inlineSVGImages(r.gatherOnce(o.DataText("text/html"))))
	case o.DataText("image/svg+xml") != "":
		b.WriteString("<figure class=\"nudge-figure\">" + inlineSVG(o.DataText("image/svg+xml"), "") + "</figure>")
	case firstImage(o) != "":
		t := firstImage(o)
		data := strings.Join(strings.Fields(o.DataText(t)), "")
		b.WriteString("<figure class=\"nudge-figure\"><img alt=\"\" src=\"data:" + t + ";base64," + data + "\"></figure>")
	case o.DataText("text/markdown") != "":
		b.WriteString(r.renderMarkdown([]byte(o.DataText("text/markdown")), nil))
	case o.DataText("text/plain") != "":
		b.WriteString("<pre class=\"nudge-text\">" + esc(stripANSI(o.DataText("text/plain"))) + "</pre>")
	default:
		types := o.MIMETypes()
		b.WriteString("<p class=\"nudge-note\">(an output of type " + esc(strings.Join(types, ", ")) + ", which a page cannot show)</p>")
	}
	b.WriteString("\n</div>\n")
}

func firstImage(o *notebook.Output) string {
	for _, t := range imageTypes {
		if o.DataText(t) != "" {
			return t
		}
	}
	return ""
}

var ansiRE = regexp.MustCompile(`\x1b\[[0-9;]*[A-Za-z]`)

// stripANSI removes terminal colour codes.
func stripANSI(s string) string { return ansiRE.ReplaceAllString(s, "") }

// svgImgRE matches an <img> whose source is an SVG data URI, as nudge's
// results carry their charts.
var svgImgRE = regexp.MustCompile(`<img([^>]*?) src="data:image/svg\+xml;base64,([A-Za-z0-9+/=]+)"([^>]*)>`)
var altRE = regexp.MustCompile(`alt="([^"]*)"`)

// inlineSVGImages replaces every <img> of an SVG data URI by the SVG
// itself, so that the chart is part of the page: it prints as vectors, and
// its text can be searched and copied.
func inlineSVGImages(h string) string {
	return svgImgRE.ReplaceAllStringFunc(h, func(m string) string {
		sub := svgImgRE.FindStringSubmatch(m)
		data, err := base64.StdEncoding.DecodeString(sub[2])
		if err != nil {
			return m
		}
		alt := ""
		if a := altRE.FindStringSubmatch(sub[1] + sub[3]); a != nil {
			alt = html.UnescapeString(a[1])
		}
		return inlineSVG(string(data), alt)
	})
}

var svgOpenRE = regexp.MustCompile(`(?s)<svg\b`)

// inlineSVG returns an SVG document as an element of the page: the XML
// declaration, comments and doctype dropped, a class that scales it to the
// page's width, and its description as its accessible name.
func inlineSVG(doc, alt string) string {
	i := svgOpenRE.FindStringIndex(doc)
	if i == nil {
		return "<pre class=\"nudge-text\">" + html.EscapeString(doc) + "</pre>"
	}
	svg := strings.TrimSpace(doc[i[0]:])
	attrs := ` class="nudge-svg" role="img"`
	if alt != "" {
		attrs += ` aria-label="` + html.EscapeString(alt) + `"`
	}
	return "<svg" + attrs + svg[len("<svg"):]
}

// markdown renders a markdown cell.
func (r *writer) markdown(c *notebook.Cell) string {
	return r.renderMarkdown([]byte(c.Source), c.Attachments)
}

func (r *writer) renderMarkdown(src []byte, attachments map[string]any) string {
	var b bytes.Buffer
	ctx := &imageContext{dir: r.f.Dir, attachments: attachments}
	doc := r.md.Parser().Parse(textReader(src))
	ctx.resolve(doc, src)
	if err := r.md.Renderer().Render(&b, src, doc); err != nil {
		return "<pre>" + html.EscapeString(string(src)) + "</pre>"
	}
	return b.String()
}

func newMarkdown() goldmark.Markdown {
	return goldmark.New(
		goldmark.WithExtensions(extension.GFM),
		goldmark.WithRendererOptions(
			renderer.WithNodeRenderers(util.Prioritized(&imageRenderer{}, 100)),
		),
	)
}

// imageContext makes the images of a markdown text part of the page: a
// cell attachment or a local file becomes a data URI; anything else is
// shown as its text and address.
type imageContext struct {
	dir         string
	attachments map[string]any
}

// embedded is the data URI an image was resolved to, kept in the node.
const embeddedAttr = "nudge-embedded"

func (ic *imageContext) resolve(doc ast.Node, src []byte) {
	ast.Walk(doc, func(n ast.Node, entering bool) (ast.WalkStatus, error) {
		img, ok := n.(*ast.Image)
		if !entering || !ok {
			return ast.WalkContinue, nil
		}
		if uri := ic.dataURI(string(img.Destination)); uri != "" {
			img.SetAttributeString(embeddedAttr, []byte(uri))
		}
		return ast.WalkSkipChildren, nil
	})
}

var imageExt = map[string]string{".png": "image/png", ".jpg": "image/jpeg", ".jpeg": "image/jpeg", ".gif": "image/gif", ".svg": "image/svg+xml", ".webp": "image/webp"}

func (ic *imageContext) dataURI(dest string) string {
	if strings.HasPrefix(dest, "data:image/") && !strings.HasPrefix(dest, "data:image/svg") {
		return dest
	}
	if name, ok := strings.CutPrefix(dest, "attachment:"); ok {
		bundle, _ := ic.attachments[name].(map[string]any)
		types := make([]string, 0, len(bundle))
		for t := range bundle {
			types = append(types, t)
		}
		sort.Strings(types)
		for _, t := range types {
			if s, ok := bundle[t].(string); ok && strings.HasPrefix(t, "image/") && t != "image/svg+xml" {
				return "data:" + t + ";base64," + strings.Join(strings.Fields(s), "")
			}
		}
		return ""
	}
	if strings.Contains(dest, ":") || strings.HasPrefix(dest, "//") || filepath.IsAbs(dest) {
		return "" // a URL (or a path outside the notebook's folder): never loaded
	}
	mime := imageExt[strings.ToLower(filepath.Ext(dest))]
	if mime == "" || mime == "image/svg+xml" {
		return ""
	}
	data, err := os.ReadFile(filepath.Join(ic.dir, filepath.FromSlash(dest)))
	if err != nil {
		return ""
	}
	return "data:" + mime + ";base64," + base64.StdEncoding.EncodeToString(data)
}

// imageRenderer draws markdown images: embedded ones as <img> with their
// data URI, the others as a note with their alt text and address, so that
// the page loads nothing.
type imageRenderer struct{}

func (ir *imageRenderer) RegisterFuncs(reg renderer.NodeRendererFuncRegisterer) {
	reg.Register(ast.KindImage, ir.render)
}

func (ir *imageRenderer) render(w util.BufWriter, source []byte, node ast.Node, entering bool) (ast.WalkStatus, error) {
	if !entering {
		return ast.WalkContinue, nil
	}
	n := node.(*ast.Image)
	alt := html.EscapeString(plainText(n, source))
	if v, ok := n.AttributeString(embeddedAttr); ok {
		w.WriteString(`<img alt="` + alt + `" src="` + html.EscapeString(string(v.([]byte))) + `">`)
		return ast.WalkSkipChildren, nil
	}
	w.WriteString(`<span class="nudge-noimage">[image not included: ` + alt + ` (` + html.EscapeString(string(n.Destination)) + `)]</span>`)
	return ast.WalkSkipChildren, nil
}

// plainText is the text of a node's children.
func plainText(n ast.Node, source []byte) string {
	var b strings.Builder
	ast.Walk(n, func(c ast.Node, entering bool) (ast.WalkStatus, error) {
		if t, ok := c.(*ast.Text); ok && entering {
			b.Write(t.Segment.Value(source))
		}
		if s, ok := c.(*ast.String); ok && entering {
			b.Write(s.Value)
		}
		return ast.WalkContinue, nil
	})
	return b.String()
}

func textReader(src []byte) text.Reader { return text.NewReader(src) }
