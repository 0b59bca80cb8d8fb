package plotting

import (
	"errors"
	"image/color"
	"math"

	"gonum.org/v1/plot/palette"
)

// ramp is the sequential colour map of the heat map: the theme's
// rampAnchors spaced evenly over [min, max] and interpolated in CIELAB.
// It implements palette.ColorMap.
type ramp struct {
	anchors  [][3]float64 // CIELAB of rampAnchors
	min, max float64
	alpha    float64
}

var _ palette.ColorMap = (*ramp)(nil)

func newRamp(min, max float64) *ramp {
	r := &ramp{min: min, max: max, alpha: 1}
	for _, c := range rampAnchors {
		r.anchors = append(r.anchors, srgbToLab(c))
	}
	return r
}

// errOutOfRange is returned by ramp.At for values outside [Min, Max].
var errOutOfRange = errors.New("plotting: value outside the colour map's range")

// At returns the colour of v.
func (r *ramp) At(v float64) (color.Color, error) {
	if math.IsNaN(v) || v < r.min || v > r.max {
		return nil, errOutOfRange
	}
	t := 0.0
	if r.max > r.min {
		t = (v - r.min) / (r.max - r.min)
	}
	return r.atFraction(t), nil
}

// atFraction returns the colour at fraction t in [0, 1] of the ramp.
func (r *ramp) atFraction(t float64) color.Color {
	t = math.Max(0, math.Min(1, t))
	seg := t * float64(len(r.anchors)-1)
	i := int(seg)
	if i >= len(r.anchors)-1 {
		i = len(r.anchors) - 2
	}
	f := seg - float64(i)
	a, b := r.anchors[i], r.anchors[i+1]
	lab := [3]float64{
		a[0] + f*(b[0]-a[0]),
		a[1] + f*(b[1]-a[1]),
		a[2] + f*(b[2]-a[2]),
	}
	c := labToSRGB(lab)
	c.A = uint8(math.Round(255 * r.alpha))
	return c
}

func (r *ramp) Max() float64       { return r.max }
func (r *ramp) SetMax(v float64)   { r.max = v }
func (r *ramp) Min() float64       { return r.min }
func (r *ramp) SetMin(v float64)   { r.min = v }
func (r *ramp) Alpha() float64     { return r.alpha }
func (r *ramp) SetAlpha(a float64) { r.alpha = a }

// Palette returns n colours evenly spaced along the ramp.
func (r *ramp) Palette(n int) palette.Palette {
	cols := make(rampPalette, n)
	for i := range cols {
		t := 0.0
		if n > 1 {
			t = float64(i) / float64(n-1)
		}
		cols[i] = r.atFraction(t)
	}
	return cols
}

type rampPalette []color.Color

func (p rampPalette) Colors() []color.Color { return p }

// CIELAB conversion with the D65 white point, after IEC 61966-2-1 (sRGB)
// and CIE 15:2004 (CIELAB).
//
//	linear = ((c + 0.055) / 1.055)^2.4        (c > 0.04045; else c / 12.92)
//	L* = 116 f(Y/Yn) - 16,  a* = 500 (f(X/Xn) - f(Y/Yn)),  b* = 200 (f(Y/Yn) - f(Z/Zn))
//	f(t) = t^(1/3) for t > (6/29)^3, else t / (3 (6/29)^2) + 4/29
//
// References:
//   - IEC 61966-2-1:1999, Multimedia systems and equipment - Colour
//     measurement and management - Default RGB colour space - sRGB.
//   - CIE 15:2004, Colorimetry, 3rd edition.

// d65 is the reference white (Xn, Yn, Zn) for CIELAB.
var d65 = [3]float64{0.95047, 1.0, 1.08883}

func srgbToLinear(c float64) float64 {
	if c <= 0.04045 {
		return c / 12.92
	}
	return math.Pow((c+0.055)/1.055, 2.4)
}

func linearToSRGB(c float64) float64 {
	if c <= 0.0031308 {
		return 12.92 * c
	}
	return 1.055*math.Pow(c, 1/2.4) - 0.055
}

// linearRGB returns the linear-light RGB components of c in [0, 1],
// ignoring alpha.
func linearRGB(c color.Color) [3]float64 {
	n := color.NRGBAModel.Convert(c).(color.NRGBA)
	return [3]float64{
		srgbToLinear(float64(n.R) / 255),
		srgbToLinear(float64(n.G) / 255),
		srgbToLinear(float64(n.B) / 255),
	}
}

func linearToLab(l [3]float64) [3]float64 {
	x := 0.4124564*l[0] + 0.3575761*l[1] + 0.1804375*l[2]
	y := 0.2126729*l[0] + 0.7151522*l[1] + 0.0721750*l[2]
	z := 0.0193339*l[0] + 0.1191920*l[1] + 0.9503041*l[2]
	f := func(t float64) float64 {
		const d = 6.0 / 29
		if t > d*d*d {
			return math.Cbrt(t)
		}
		return t/(3*d*d) + 4.0/29
	}
	fx, fy, fz := f(x/d65[0]), f(y/d65[1]), f(z/d65[2])
	return [3]float64{116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)}
}

func srgbToLab(c color.Color) [3]float64 { return linearToLab(linearRGB(c)) }

func labToSRGB(lab [3]float64) color.NRGBA {
	fy := (lab[0] + 16) / 116
	fx := fy + lab[1]/500
	fz := fy - lab[2]/200
	inv := func(t float64) float64 {
		const d = 6.0 / 29
		if t > d {
			return t * t * t
		}
		return 3 * d * d * (t - 4.0/29)
	}
	x, y, z := inv(fx)*d65[0], inv(fy)*d65[1], inv(fz)*d65[2]
	r := 3.2404542*x - 1.5371385*y - 0.4985314*z
	g := -0.9692660*x + 1.8760108*y + 0.0415560*z
	b := 0.0556434*x - 0.2040259*y + 1.0572252*z
	enc := func(c float64) uint8 {
		c = linearToSRGB(math.Max(0, math.Min(1, c)))
		return uint8(math.Round(255 * c))
	}
	return color.NRGBA{R: enc(r), G: enc(g), B: enc(b), A: 0xFF}
}
