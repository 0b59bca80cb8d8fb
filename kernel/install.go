package kernel

import (
	"bytes"
	"encoding/json"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
)

// Version is the version of nudge.
const Version = "0.1.0"

// Language is the name of the language, and of the kernelspec's directory.
const Language = "nudge"

// Spec is the kernelspec, the kernel.json that Jupyter reads.
type Spec struct {
	Argv          []string       `json:"argv"`
	DisplayName   string         `json:"display_name"`
	Language      string         `json:"language"`
	InterruptMode string         `json:"interrupt_mode"`
	Metadata      map[string]any `json:"metadata"`
}

// SpecDir returns where a kernelspec goes for the scope "user",
// "sys-prefix" or "prefix" (with prefix set).
func SpecDir(scope, prefix string) (string, error) {
	switch scope {
	case "user":
		if d := os.Getenv("JUPYTER_DATA_DIR"); d != "" {
			return filepath.Join(d, "kernels", Language), nil
		}
		home, err := os.UserHomeDir()
		if err != nil {
			return "", err
		}
		switch runtime.GOOS {
		case "darwin":
			return filepath.Join(home, "Library", "Jupyter", "kernels", Language), nil
		case "windows":
			return filepath.Join(os.Getenv("APPDATA"), "jupyter", "kernels", Language), nil
		}
		data := os.Getenv("XDG_DATA_HOME")
		if data == "" {
			data = filepath.Join(home, ".local", "share")
		}
		return filepath.Join(data, "jupyter", "kernels", Language), nil
	case "sys-prefix":
		p := os.Getenv("CONDA_PREFIX")
		if p == "" {
			p = os.Getenv("VIRTUAL_ENV")
		}
		if p == "" {
			out, err := exec.Command("python3", "-c", "import sys; print(sys.prefix)").Output()
			if err != nil {
				return "", fmt.Errorf("--sys-prefix: no active environment and python3 could not tell sys.prefix: %v", err)
			}
			p = strings.TrimSpace(string(out))
		}
		return filepath.Join(p, "share", "jupyter", "kernels", Language), nil
	case "prefix":
		if prefix == "" {
			return "", fmt.Errorf("--prefix needs a directory")
		}
		return filepath.Join(prefix, "share", "jupyter", "kernels", Language), nil
	}
	return "", fmt.Errorf("unknown install scope %q", scope)
}

// InstallSpec writes kernel.json and the logos into dir, with exe as the
// program Jupyter starts.
func InstallSpec(dir, exe string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	spec := Spec{
		Argv:          []string{exe, "kernel", "-f", "{connection_file}"},
		DisplayName:   "nudge (cost-model sensitivity)",
		Language:      Language,
		InterruptMode: "message",
		Metadata:      map[string]any{},
	}
	b, err := json.MarshalIndent(spec, "", "  ")
	if err != nil {
		return err
	}
	if err := os.WriteFile(filepath.Join(dir, "kernel.json"), append(b, '\n'), 0o644); err != nil {
		return err
	}
	for _, size := range []int{32, 64} {
		if err := os.WriteFile(filepath.Join(dir, fmt.Sprintf("logo-%dx%d.png", size, size)), Logo(size), 0o644); err != nil {
			return err
		}
	}
	return os.WriteFile(filepath.Join(dir, "logo-svg.svg"), []byte(LogoSVG), 0o644)
}

// The logo: three horizontal bars of falling length on a dark teal square, the
// shape of a ranked sensitivity chart.
var (
	logoBack = color.RGBA{0x1f, 0x4e, 0x5f, 0xff}
	logoBars = []color.RGBA{{0xf2, 0xa5, 0x41, 0xff}, {0xf6, 0xc1, 0x7a, 0xff}, {0xfa, 0xdd, 0xb4, 0xff}}
)

// LogoSVG is the logo as SVG.
const LogoSVG = `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 64 64" width="64" height="64">
<rect width="64" height="64" rx="10" fill="#1f4e5f"/>
<rect x="10" y="12" width="44" height="10" rx="2" fill="#f2a541"/>
<rect x="10" y="27" width="32" height="10" rx="2" fill="#f6c17a"/>
<rect x="10" y="42" width="20" height="10" rx="2" fill="#faddb4"/>
</svg>
`

// Logo draws the logo as a size×size PNG.
func Logo(size int) []byte {
	img := image.NewRGBA(image.Rect(0, 0, size, size))
	s := float64(size) / 64
	r := 10 * s
	for y := 0; y < size; y++ {
		for x := 0; x < size; x++ {
			if inRounded(float64(x)+0.5, float64(y)+0.5, 0, 0, float64(size), float64(size), r) {
				img.Set(x, y, logoBack)
			}
		}
	}
	bars := [][4]float64{{10, 12, 44, 10}, {10, 27, 32, 10}, {10, 42, 20, 10}}
	for i, b := range bars {
		for y := int(b[1] * s); y < int((b[1]+b[3])*s); y++ {
			for x := int(b[0] * s); x < int((b[0]+b[2])*s); x++ {
				img.Set(x, y, logoBars[i])
			}
		}
	}
	var buf bytes.Buffer
	_ = png.Encode(&buf, img)
	return buf.Bytes()
}

func inRounded(x, y, x0, y0, w, h, r float64) bool {
	cx := min(max(x, x0+r), x0+w-r)
	cy := min(max(y, y0+r), y0+h-r)
	dx, dy := x-cx, y-cy
	return dx*dx+dy*dy <= r*r
}
