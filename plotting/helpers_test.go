package plotting

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"
)

// svgDoc is what the structural tests read from an SVG document.
type svgDoc struct {
	width, height float64 // in points, from the viewBox
	texts         []svgText
	paths         []svgPath
	title         string
}

type svgText struct {
	x, y    float64 // attributes as written: y is minus the canvas height
	content string
	rotated bool // inside a rotating group
}

type svgPath struct {
	d     string
	style string
	pts   [][2]float64 // canvas points (origin bottom left)
}

func (p svgPath) fill() string        { return styleValue(p.style, "fill") }
func (p svgPath) stroke() string      { return styleValue(p.style, "stroke") }
func (p svgPath) strokeWidth() string { return styleValue(p.style, "stroke-width") }

// bounds returns the bounding box of the path's points.
func (p svgPath) bounds() (x0, y0, x1, y1 float64) {
	x0, y0, x1, y1 = math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for _, pt := range p.pts {
		x0, x1 = math.Min(x0, pt[0]), math.Max(x1, pt[0])
		y0, y1 = math.Min(y0, pt[1]), math.Max(y1, pt[1])
	}
	return
}

func styleValue(style, key string) string {
	for _, kv := range strings.Split(style, ";") {
		k, v, ok := strings.Cut(kv, ":")
		if ok && strings.TrimSpace(k) == key {
			return strings.TrimSpace(v)
		}
	}
	return ""
}

// parseSVG decodes an SVG document with encoding/xml, failing the test if it
// is not well-formed XML.
func parseSVG(t *testing.T, data []byte) *svgDoc {
	t.Helper()
	doc := &svgDoc{}
	dec := xml.NewDecoder(bytes.NewReader(data))
	var stack []string // transforms of open groups
	var cur *svgText
	inTitle := false
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v", err)
		}
		switch el := tok.(type) {
		case xml.StartElement:
			attr := func(name string) string {
				for _, a := range el.Attr {
					if a.Name.Local == name {
						return a.Value
					}
				}
				return ""
			}
			switch el.Name.Local {
			case "svg":
				f := strings.Fields(attr("viewBox"))
				if len(f) == 4 {
					doc.width, _ = strconv.ParseFloat(f[2], 64)
					doc.height, _ = strconv.ParseFloat(f[3], 64)
				}
			case "g":
				stack = append(stack, attr("transform"))
			case "title":
				inTitle = true
			case "text":
				x, _ := strconv.ParseFloat(attr("x"), 64)
				y, _ := strconv.ParseFloat(attr("y"), 64)
				rotated := false
				for _, tr := range stack {
					rotated = rotated || strings.Contains(tr, "rotate")
				}
				cur = &svgText{x: x, y: y, rotated: rotated}
			case "path":
				doc.paths = append(doc.paths, svgPath{d: attr("d"), style: attr("style"), pts: pathPoints(attr("d"))})
			}
		case xml.CharData:
			if cur != nil {
				cur.content += string(el)
			}
			if inTitle {
				doc.title += string(el)
			}
		case xml.EndElement:
			switch el.Name.Local {
			case "g":
				stack = stack[:len(stack)-1]
			case "title":
				inTitle = false
			case "text":
				doc.texts = append(doc.texts, *cur)
				cur = nil
			}
		}
	}
	return doc
}

// pathPoints reads the M and L points of SVG path data.
func pathPoints(d string) [][2]float64 {
	var pts [][2]float64
	for _, part := range strings.FieldsFunc(d, func(r rune) bool { return r == 'M' || r == 'L' || r == 'Z' || r == 'A' }) {
		xy := strings.Split(strings.Fields(part)[len(strings.Fields(part))-1], ",")
		if len(xy) != 2 {
			continue
		}
		x, err1 := strconv.ParseFloat(xy[0], 64)
		y, err2 := strconv.ParseFloat(xy[1], 64)
		if err1 == nil && err2 == nil {
			pts = append(pts, [2]float64{x, y})
		}
	}
	return pts
}

// find returns the texts whose content is s.
func (d *svgDoc) find(s string) []svgText {
	var out []svgText
	for _, t := range d.texts {
		if t.content == s {
			out = append(out, t)
		}
	}
	return out
}

// mustFind returns the one text whose content is s.
func (d *svgDoc) mustFind(t *testing.T, s string) svgText {
	t.Helper()
	got := d.find(s)
	if len(got) != 1 {
		t.Fatalf("want one text %q in the SVG, found %d; texts: %s", s, len(got), d.allText())
	}
	return got[0]
}

func (d *svgDoc) allText() string {
	var parts []string
	for _, t := range d.texts {
		parts = append(parts, strconv.Quote(t.content))
	}
	return strings.Join(parts, " ")
}

// fills returns the paths filled with the colour written as #RRGGBB.
func (d *svgDoc) fills(hex string) []svgPath {
	var out []svgPath
	for _, p := range d.paths {
		if strings.EqualFold(p.fill(), hex) {
			out = append(out, p)
		}
	}
	return out
}

func hexOf(c color.Color) string {
	n := color.NRGBAModel.Convert(c).(color.NRGBA)
	return fmt.Sprintf("#%02X%02X%02X", n.R, n.G, n.B)
}

func renderSVGBytes(t *testing.T, c Chart) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := c.WriteSVG(&buf, nil); err != nil {
		t.Fatalf("WriteSVG: %v", err)
	}
	return buf.Bytes()
}

func renderPNGImage(t *testing.T, c Chart, o *Options) image.Image {
	t.Helper()
	var buf bytes.Buffer
	if err := c.WritePNG(&buf, o); err != nil {
		t.Fatalf("WritePNG: %v", err)
	}
	img, err := png.Decode(&buf)
	if err != nil {
		t.Fatalf("PNG does not decode: %v", err)
	}
	return img
}

func sameRGB(a, b color.Color) bool {
	x := color.NRGBAModel.Convert(a).(color.NRGBA)
	y := color.NRGBAModel.Convert(b).(color.NRGBA)
	return x.R == y.R && x.G == y.G && x.B == y.B
}

// textLines splits a text form into lines without the final newline.
func textLines(s string) []string {
	return strings.Split(strings.TrimSuffix(s, "\n"), "\n")
}

// lineIndex returns the index of the first line starting with prefix.
func lineIndex(lines []string, prefix string) int {
	for i, l := range lines {
		if strings.HasPrefix(l, prefix) {
			return i
		}
	}
	return -1
}

func runes(s string) int { return utf8.RuneCountInString(s) }
