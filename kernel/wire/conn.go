package wire

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"strconv"
)

// ConnectionInfo is the content of a Jupyter connection file: where the
// five sockets listen and how messages are signed.
type ConnectionInfo struct {
	Transport       string `json:"transport"` // "tcp" or "ipc"
	IP              string `json:"ip"`
	ShellPort       int    `json:"shell_port"`
	IOPubPort       int    `json:"iopub_port"`
	StdinPort       int    `json:"stdin_port"`
	ControlPort     int    `json:"control_port"`
	HBPort          int    `json:"hb_port"`
	SignatureScheme string `json:"signature_scheme"`
	Key             string `json:"key"`
	KernelName      string `json:"kernel_name,omitempty"`
}

// ErrConnectionFile reports an unusable connection file.
var ErrConnectionFile = errors.New("wire: bad connection file")

// ReadConnectionFile reads and checks the connection file at path.
func ReadConnectionFile(path string) (ConnectionInfo, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return ConnectionInfo{}, err
	}
	return ParseConnectionInfo(b)
}

// ParseConnectionInfo decodes and checks a connection file's JSON. A missing
// transport means "tcp" and a missing signature scheme means "hmac-sha256".
func ParseConnectionInfo(b []byte) (ConnectionInfo, error) {
	var ci ConnectionInfo
	if err := json.Unmarshal(b, &ci); err != nil {
		return ci, fmt.Errorf("%w: %v", ErrConnectionFile, err)
	}
	if ci.Transport == "" {
		ci.Transport = "tcp"
	}
	if ci.SignatureScheme == "" {
		ci.SignatureScheme = "hmac-sha256"
	}
	if ci.Transport != "tcp" && ci.Transport != "ipc" {
		return ci, fmt.Errorf("%w: transport %q is not tcp or ipc", ErrConnectionFile, ci.Transport)
	}
	if ci.SignatureScheme != "hmac-sha256" {
		return ci, fmt.Errorf("%w: signature scheme %q is not supported (only hmac-sha256)", ErrConnectionFile, ci.SignatureScheme)
	}
	if ci.IP == "" {
		return ci, fmt.Errorf("%w: no ip", ErrConnectionFile)
	}
	for _, p := range []struct {
		name string
		port int
	}{{"shell_port", ci.ShellPort}, {"iopub_port", ci.IOPubPort}, {"stdin_port", ci.StdinPort}, {"control_port", ci.ControlPort}, {"hb_port", ci.HBPort}} {
		if p.port <= 0 || p.port > 65535 {
			return ci, fmt.Errorf("%w: %s %d out of range 1…65535", ErrConnectionFile, p.name, p.port)
		}
	}
	return ci, nil
}

// Endpoint returns the ZeroMQ endpoint of a port under the file's transport:
// "tcp://IP:PORT", or "ipc://IP-PORT" as Jupyter names its ipc sockets.
func (ci ConnectionInfo) Endpoint(port int) string {
	if ci.Transport == "ipc" {
		return "ipc://" + ci.IP + "-" + strconv.Itoa(port)
	}
	return "tcp://" + joinHostPort(ci.IP, port)
}

func joinHostPort(host string, port int) string {
	for i := 0; i < len(host); i++ {
		if host[i] == ':' {
			return "[" + host + "]:" + strconv.Itoa(port)
		}
	}
	return host + ":" + strconv.Itoa(port)
}
