package jupyter

import (
	"encoding/json"
	"fmt"
	"net"
	"os"
	"strconv"
)

// ConnectionInfo is the content of a Jupyter connection file: where the
// five channels listen and how messages are signed.
type ConnectionInfo struct {
	Transport       string `json:"transport"` // "tcp" or "ipc"
	IP              string `json:"ip"`        // for ipc, the socket path prefix
	ShellPort       int    `json:"shell_port"`
	IOPubPort       int    `json:"iopub_port"`
	StdinPort       int    `json:"stdin_port"`
	ControlPort     int    `json:"control_port"`
	HBPort          int    `json:"hb_port"`
	Key             string `json:"key"`
	SignatureScheme string `json:"signature_scheme"` // "hmac-sha256"
	KernelName      string `json:"kernel_name,omitempty"`
}

// ReadConnectionFile reads and checks a connection file.
func ReadConnectionFile(path string) (ConnectionInfo, error) {
	var ci ConnectionInfo
	b, err := os.ReadFile(path)
	if err != nil {
		return ci, err
	}
	if err := json.Unmarshal(b, &ci); err != nil {
		return ci, fmt.Errorf("connection file %s: %w", path, err)
	}
	if err := ci.check(); err != nil {
		return ci, fmt.Errorf("connection file %s: %w", path, err)
	}
	return ci, nil
}

func (ci *ConnectionInfo) check() error {
	switch ci.Transport {
	case "":
		ci.Transport = "tcp"
	case "tcp", "ipc":
	default:
		return fmt.Errorf("unsupported transport %q (want tcp or ipc)", ci.Transport)
	}
	if ci.IP == "" {
		if ci.Transport == "ipc" {
			return fmt.Errorf("ipc transport needs ip (the socket path prefix)")
		}
		ci.IP = "127.0.0.1"
	}
	for _, p := range ci.ports() {
		if *p.port < 0 || *p.port > 65535 {
			return fmt.Errorf("%s %d out of range", p.name, *p.port)
		}
	}
	if _, err := newSigner(ci.SignatureScheme, ci.Key); err != nil {
		return err
	}
	return nil
}

type namedPort struct {
	name string
	port *int
}

func (ci *ConnectionInfo) ports() []namedPort {
	return []namedPort{
		{"shell_port", &ci.ShellPort},
		{"iopub_port", &ci.IOPubPort},
		{"stdin_port", &ci.StdinPort},
		{"control_port", &ci.ControlPort},
		{"hb_port", &ci.HBPort},
	}
}

// Endpoint is the ZeroMQ endpoint of one port: tcp://ip:port, or for ipc
// the Jupyter convention ipc://ip-port.
func (ci ConnectionInfo) Endpoint(port int) string {
	if ci.Transport == "ipc" {
		return "ipc://" + ci.IP + "-" + strconv.Itoa(port)
	}
	return "tcp://" + net.JoinHostPort(ci.IP, strconv.Itoa(port))
}

// freeIPCPort picks the first port number n >= 1 whose socket path
// ip-n is not in use, for an ipc connection file that leaves a port 0.
func freeIPCPort(ip string, taken map[int]bool) int {
	for n := 1; ; n++ {
		if taken[n] {
			continue
		}
		if _, err := os.Lstat(ip + "-" + strconv.Itoa(n)); os.IsNotExist(err) {
			return n
		}
	}
}
