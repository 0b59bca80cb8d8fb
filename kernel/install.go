package kernel

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
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
		p, err := JupyterPrefix()
		if err != nil {
			return "", err
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

// JupyterPrefix returns sys.prefix of the Python that runs Jupyter: the
// interpreter named on the first line of the jupyter command found on PATH
// (a Python script, as pip, conda and Debian install it). Jupyter looks for
// kernelspecs under PREFIX/share/jupyter, which `jupyter --paths` lists among
// its data directories. An active environment's python3 can differ from
// Jupyter's, so the jupyter command is asked, not the first python3.
func JupyterPrefix() (string, error) {
	jupyter, err := exec.LookPath("jupyter")
	if err != nil {
		return "", fmt.Errorf("--sys-prefix: no jupyter command on PATH to find its Python (install Jupyter first, see the README, or use --prefix DIR)")
	}
	f, err := os.Open(jupyter)
	if err != nil {
		return "", fmt.Errorf("--sys-prefix: %v", err)
	}
	line, _ := bufio.NewReader(io.LimitReader(f, 4096)).ReadString('\n')
	f.Close()
	argv := strings.Fields(strings.TrimPrefix(strings.TrimSpace(line), "#!"))
	if !strings.HasPrefix(line, "#!") || len(argv) == 0 {
		return "", fmt.Errorf("--sys-prefix: %s is not a Python script, so its Python cannot be told: use --prefix DIR with the prefix of Jupyter's Python", jupyter)
	}
	args := append(argv[1:], "-c", "import sys; print(sys.prefix)")
	out, err := exec.Command(argv[0], args...).Output()
	prefix := strings.TrimSpace(string(out))
	if err != nil || prefix == "" || !filepath.IsAbs(prefix) {
		return "", fmt.Errorf("--sys-prefix: %s (the Python of %s) could not tell its sys.prefix: %v", strings.Join(argv, " "), jupyter, err)
	}
	return prefix, nil
}

// InstallSpec copies exe into dir, as the program Jupyter starts, and writes
// kernel.json and the logos beside it. It returns the path of the copy. A
// copy keeps the kernelspec working when the binary it was installed from
// goes away: `go run` builds into a cache that `go clean` empties, and a
// build directory is rebuilt or deleted. A kernel still running from an
// earlier copy keeps running: the new copy replaces the file's name, not its
// contents.
func InstallSpec(dir, exe string) (string, error) {
	// Jupyter starts kernels in the notebook's directory: the path must not
	// be relative.
	dir, err := filepath.Abs(dir)
	if err != nil {
		return "", err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return "", err
	}
	prog := filepath.Join(dir, Language)
	if runtime.GOOS == "windows" {
		prog += ".exe"
	}
	if err := copyProgram(prog, exe); err != nil {
		return "", err
	}
	spec := Spec{
		Argv:          []string{prog, "kernel", "-f", "{connection_file}"},
		DisplayName:   KernelDisplayName,
		Language:      Language,
		InterruptMode: "message",
		Metadata:      map[string]any{},
	}
	b, err := json.MarshalIndent(spec, "", "  ")
	if err != nil {
		return "", err
	}
	if err := os.WriteFile(filepath.Join(dir, "kernel.json"), append(b, '\n'), 0o644); err != nil {
		return "", err
	}
	for _, size := range []int{32, 64} {
		if err := os.WriteFile(filepath.Join(dir, fmt.Sprintf("logo-%dx%d.png", size, size)), Logo(size), 0o644); err != nil {
			return "", err
		}
	}
	return prog, os.WriteFile(filepath.Join(dir, "logo-svg.svg"), []byte(LogoSVG), 0o644)
}

// copyProgram copies the executable src to dst through a temporary file
// renamed into place; it does nothing when both are the same file.
func copyProgram(dst, src string) error {
	si, err := os.Stat(src)
	if err != nil {
		return err
	}
	if di, err := os.Stat(dst); err == nil && os.SameFile(si, di) {
		return nil
	}
	in, err := os.Open(src)
	if err != nil {
		return err
	}
	defer in.Close()
	tmp, err := os.CreateTemp(filepath.Dir(dst), "."+filepath.Base(dst)+"-*")
	if err != nil {
		return err
	}
	defer os.Remove(tmp.Name()) // after a successful rename, nothing is left to remove
	if _, err := io.Copy(tmp, in); err != nil {
		tmp.Close()
		return fmt.Errorf("copying %s: %v", src, err)
	}
	if err := tmp.Chmod(0o755); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Close(); err != nil {
		return err
	}
	return os.Rename(tmp.Name(), dst)
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
