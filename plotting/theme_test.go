package plotting

import (
	"image/color"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// ciede2000 is the CIEDE2000 colour difference with kL = kC = kH = 1.
//
// References:
//   - Sharma, G., Wu, W. and Dalal, E. N. (2005). The CIEDE2000
//     color-difference formula: implementation notes, supplementary test
//     data, and mathematical observations. Color Research & Application
//     30(1), 21-30.
func ciede2000(l1, l2 [3]float64) float64 {
	const rad = math.Pi / 180
	L1, a1, b1 := l1[0], l1[1], l1[2]
	L2, a2, b2 := l2[0], l2[1], l2[2]
	cbar := (math.Hypot(a1, b1) + math.Hypot(a2, b2)) / 2
	g := 0.5 * (1 - math.Sqrt(math.Pow(cbar, 7)/(math.Pow(cbar, 7)+math.Pow(25, 7))))
	a1p, a2p := (1+g)*a1, (1+g)*a2
	c1p, c2p := math.Hypot(a1p, b1), math.Hypot(a2p, b2)
	hue := func(b, a float64) float64 {
		if a == 0 && b == 0 {
			return 0
		}
		h := math.Atan2(b, a) / rad
		if h < 0 {
			h += 360
		}
		return h
	}
	h1p, h2p := hue(b1, a1p), hue(b2, a2p)
	dLp, dCp := L2-L1, c2p-c1p
	var dhp float64
	if c1p*c2p != 0 {
		dhp = h2p - h1p
		switch {
		case dhp > 180:
			dhp -= 360
		case dhp < -180:
			dhp += 360
		}
	}
	dHp := 2 * math.Sqrt(c1p*c2p) * math.Sin(dhp/2*rad)
	lbp, cbp := (L1+L2)/2, (c1p+c2p)/2
	var hbp float64
	switch {
	case c1p*c2p == 0:
		hbp = h1p + h2p
	case math.Abs(h1p-h2p) <= 180:
		hbp = (h1p + h2p) / 2
	case h1p+h2p < 360:
		hbp = (h1p + h2p + 360) / 2
	default:
		hbp = (h1p + h2p - 360) / 2
	}
	tt := 1 - 0.17*math.Cos((hbp-30)*rad) + 0.24*math.Cos(2*hbp*rad) + 0.32*math.Cos((3*hbp+6)*rad) - 0.20*math.Cos((4*hbp-63)*rad)
	dTheta := 30 * math.Exp(-math.Pow((hbp-275)/25, 2))
	rc := 2 * math.Sqrt(math.Pow(cbp, 7)/(math.Pow(cbp, 7)+math.Pow(25, 7)))
	sl := 1 + 0.015*(lbp-50)*(lbp-50)/math.Sqrt(20+(lbp-50)*(lbp-50))
	sc := 1 + 0.045*cbp
	sh := 1 + 0.015*cbp*tt
	rt := -math.Sin(2*dTheta*rad) * rc
	return math.Sqrt(math.Pow(dLp/sl, 2) + math.Pow(dCp/sc, 2) + math.Pow(dHp/sh, 2) + rt*(dCp/sc)*(dHp/sh))
}

func TestCIEDE2000(t *testing.T) {
	// Pairs 1-3 of the supplementary test data of Sharma, Wu and Dalal
	// (2005), Table 1, first quoted from memory; each difference checked
	// against colormath 3.0.0's delta_e_cie2000 (Debian python3-colormath
	// 3.0.0-4), which gives 2.0425, 2.8615 and 3.4412 for these pairs.
	for _, tc := range []struct {
		a, b [3]float64
		want float64
	}{
		{[3]float64{50, 2.6772, -79.7751}, [3]float64{50, 0, -82.7485}, 2.0425},
		{[3]float64{50, 3.1571, -77.2803}, [3]float64{50, 0, -82.7485}, 2.8615},
		{[3]float64{50, 2.8361, -74.0200}, [3]float64{50, 0, -82.7485}, 3.4412},
	} {
		if got := ciede2000(tc.a, tc.b); !scalar.EqualWithinAbs(got, tc.want, 1e-4) {
			t.Errorf("CIEDE2000(%v, %v) = %.4f, want %.4f", tc.a, tc.b, got, tc.want)
		}
	}
}

func TestLab(t *testing.T) {
	// CIELAB of sRGB primaries with the D65 white (common practice), to
	// 0.01 as colormath 3.0.0 gives them (Debian python3-colormath 3.0.0-4,
	// convert_color from sRGBColor to LabColor, target_illuminant "d65").
	// Libraries differ in the second decimal with their sRGB matrices
	// (colorspacious 1.1.2: red 53.23, 80.11, 67.22), hence the 0.02.
	for _, tc := range []struct {
		c    color.Color
		want [3]float64
	}{
		{color.White, [3]float64{100, 0, 0}},
		{color.Black, [3]float64{0, 0, 0}},
		{rgb(255, 0, 0), [3]float64{53.24, 80.09, 67.20}},
		{rgb(0, 0, 255), [3]float64{32.30, 79.19, -107.87}},
	} {
		got := srgbToLab(tc.c)
		for i := range got {
			if !scalar.EqualWithinAbs(got[i], tc.want[i], 0.02) {
				t.Errorf("Lab(%v) = %.2f, want %.2f", tc.c, got, tc.want)
				break
			}
		}
		if back := labToSRGB(got); !sameRGB(back, tc.c) {
			t.Errorf("Lab round trip of %v gave %v", tc.c, back)
		}
	}
}

// Colour-vision-deficiency simulation matrices for linear RGB at severity
// 1.0, from Machado, Oliveira and Fernandes (2009), Table 1, first quoted
// from memory; all 27 entries checked equal to the matrices colorspacious
// 1.1.2 ships from the paper's supplementary data
// (machado_et_al_2009_matrix(kind, 100); Debian python3-colorspacious 1.1.2-3).
//
// References:
//   - Machado, G. M., Oliveira, M. M. and Fernandes, L. A. F. (2009). A
//     physiologically-based model for simulation of color vision
//     deficiency. IEEE Transactions on Visualization and Computer Graphics
//     15(6), 1291-1298.
var cvd = map[string][3][3]float64{
	"normal": {{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
	"protanopia": {
		{0.152286, 1.052583, -0.204868},
		{0.114503, 0.786281, 0.099216},
		{-0.003882, -0.048116, 1.051998},
	},
	"deuteranopia": {
		{0.367322, 0.860646, -0.227968},
		{0.280085, 0.672501, 0.047413},
		{-0.011820, 0.042940, 0.968881},
	},
	"tritanopia": {
		{1.255528, -0.076749, -0.178779},
		{-0.078411, 0.930809, 0.147602},
		{0.004733, 0.691367, 0.303900},
	},
}

func simulate(m [3][3]float64, c color.Color) [3]float64 {
	l := linearRGB(c)
	var out [3]float64
	for i := range out {
		out[i] = math.Max(0, math.Min(1, m[i][0]*l[0]+m[i][1]*l[1]+m[i][2]*l[2]))
	}
	return linearToLab(out)
}

func TestThemeColourBlindSafe(t *testing.T) {
	// Pairs drawn side by side must stay apart under normal vision and the
	// two red-green deficiencies. A CIEDE2000 difference near 10 is easy
	// to see on a chart; the tornado's pair is far beyond that.
	for _, tc := range []struct {
		name  string
		a, b  color.Color
		views []string
		min   float64
	}{
		{"tornado low/high", colLow, colHigh, []string{"normal", "protanopia", "deuteranopia", "tritanopia"}, 45},
		{"low/high text", colLowText, colHighText, []string{"normal", "protanopia", "deuteranopia"}, 25},
		{"summary bar/low", colNeutral, colLow, []string{"normal", "protanopia", "deuteranopia"}, 20},
		{"summary bar/high", colNeutral, colHigh, []string{"normal", "protanopia", "deuteranopia"}, 15},
	} {
		for _, v := range tc.views {
			if d := ciede2000(simulate(cvd[v], tc.a), simulate(cvd[v], tc.b)); d < tc.min {
				t.Errorf("%s under %s: CIEDE2000 %.1f < %v", tc.name, v, d, tc.min)
			}
		}
	}
	// The series colours, pairwise.
	for i := range seriesColors {
		for j := i + 1; j < len(seriesColors); j++ {
			for _, v := range []string{"normal", "protanopia", "deuteranopia"} {
				if d := ciede2000(simulate(cvd[v], seriesColors[i]), simulate(cvd[v], seriesColors[j])); d < 14 {
					t.Errorf("series %d and %d under %s: CIEDE2000 %.1f < 14", i, j, v, d)
				}
			}
		}
	}
}

func TestRampPerceptuallyOrdered(t *testing.T) {
	// Lightness falls strictly along the ramp, under every simulated
	// colour vision, and by nearly equal steps in normal vision.
	r := newRamp(0, 1)
	for v, m := range cvd {
		prev := math.Inf(1)
		for i := 0; i <= 100; i++ {
			c, err := r.At(float64(i) / 100)
			if err != nil {
				t.Fatal(err)
			}
			l := simulate(m, c)[0]
			if !(l < prev) {
				t.Errorf("%s: L* %.2f at %d%% does not fall from %.2f", v, l, i, prev)
				break
			}
			prev = l
		}
	}
	var steps []float64
	for i := 1; i < len(rampAnchors); i++ {
		steps = append(steps, srgbToLab(rampAnchors[i-1])[0]-srgbToLab(rampAnchors[i])[0])
	}
	for _, s := range steps {
		if math.Abs(s-14) > 1 {
			t.Errorf("ramp anchors step L* by %.2f, want 14±1: %v", s, steps)
		}
	}
	if _, err := r.At(1.5); err == nil {
		t.Errorf("At(1.5) outside [0, 1] gave no error")
	}
	if got := len(r.Palette(7).Colors()); got != 7 {
		t.Errorf("Palette(7) has %d colours", got)
	}
}

// relativeLuminance follows WCAG 2.1 (sRGB, linear weights 0.2126, 0.7152,
// 0.0722).
func relativeLuminance(c color.Color) float64 {
	l := linearRGB(c)
	return 0.2126*l[0] + 0.7152*l[1] + 0.0722*l[2]
}

func TestTextContrast(t *testing.T) {
	// WCAG 2.1 success criterion 1.4.3: text needs a contrast ratio of at
	// least 4.5:1, (L1 + 0.05) / (L2 + 0.05).
	bg := relativeLuminance(colBackground)
	for name, c := range map[string]color.Color{
		"ink": colInk, "muted": colMuted, "low text": colLowText, "high text": colHighText,
	} {
		if r := (bg + 0.05) / (relativeLuminance(c) + 0.05); r < 4.5 {
			t.Errorf("%s text on the background: contrast %.2f < 4.5", name, r)
		}
	}
}

func TestBoldFontFound(t *testing.T) {
	if fontBold.Weight <= fontSans.Weight || fontBold.Variant != "Sans" {
		t.Errorf("bold font = %+v", fontBold)
	}
}
