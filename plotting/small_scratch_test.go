package plotting

import (
	"io"
	"testing"
)

func TestTinySizes(t *testing.T) {
	for name, c := range allCharts() {
		for _, o := range []*Options{{Width: 72}, {Width: 30, Height: 20}, {Width: 2000}} {
			func() {
				defer func() {
					if r := recover(); r != nil {
						t.Errorf("%s at %v: panic %v", name, *o, r)
					}
				}()
				if err := c.WriteSVG(io.Discard, o); err != nil {
					t.Errorf("%s: %v", name, err)
				}
				if err := c.WritePNG(io.Discard, o); err != nil {
					t.Errorf("%s: %v", name, err)
				}
			}()
		}
	}
}
