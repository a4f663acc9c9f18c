package wire

import (
	"bytes"
	"encoding/hex"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"testing"
)

type wireRef struct {
	Key       string   `json:"key"`
	FramesHex []string `json:"frames_hex"`
	RFC4231   string   `json:"rfc4231_case2"`
}

func loadRef(t *testing.T) (wireRef, [][]byte) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "kernel", "wire_ref.json"))
	if err != nil {
		t.Fatal(err)
	}
	var r wireRef
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	var frames [][]byte
	for _, h := range r.FramesHex {
		f, err := hex.DecodeString(h)
		if err != nil {
			t.Fatal(err)
		}
		frames = append(frames, f)
	}
	return r, frames
}

// Reference: RFC 4231 test case 2 (key "Jefe"); the digest was computed by
// Python's hmac module in testdata/kernel/make_wire_ref.py.
func TestSignRFC4231(t *testing.T) {
	r, _ := loadRef(t)
	got := NewSigner("Jefe").Sign([]byte("what do ya "), []byte("want for nothing?"))
	if got != r.RFC4231 {
		t.Fatalf("Sign = %s, want %s", got, r.RFC4231)
	}
}

// Reference: frames serialised and signed by jupyter_client.session.Session
// (testdata/kernel/make_wire_ref.py).
func TestDecodeJupyterClientFrames(t *testing.T) {
	r, frames := loadRef(t)
	m, err := Decode(frames, NewSigner(r.Key))
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Identities) != 1 || string(m.Identities[0]) != "client-identity" {
		t.Errorf("identities = %q", m.Identities)
	}
	if m.Header.MsgType != ExecuteRequest || m.Header.Session != "0b1c2d3e-ref" || m.Header.Username != "tester" || m.Header.Version == "" {
		t.Errorf("header = %+v", m.Header)
	}
	var c struct {
		Code string `json:"code"`
	}
	if err := json.Unmarshal(m.Content, &c); err != nil || c.Code != "1 + 2" {
		t.Errorf("content = %s (%v)", m.Content, err)
	}
	// Re-encoding with the raw frames gives back the same signature.
	m.Parent, m.Metadata, m.Content = frames[4], frames[5], frames[6]
	out, err := Encode(m, NewSigner(r.Key))
	if err != nil {
		t.Fatal(err)
	}
	for i := range frames {
		if !bytes.Equal(out[i], frames[i]) {
			t.Errorf("frame %d: got %q, want %q", i, out[i], frames[i])
		}
	}
	// The wrong key, a flipped bit, an empty or a truncated signature are refused.
	if _, err := Decode(frames, NewSigner(r.Key+"x")); !errors.Is(err, ErrSignature) {
		t.Errorf("wrong key: err = %v", err)
	}
	bad := clone(frames)
	bad[6][3] ^= 1
	if _, err := Decode(bad, NewSigner(r.Key)); !errors.Is(err, ErrSignature) {
		t.Errorf("tampered content: err = %v", err)
	}
	bad = clone(frames)
	bad[2] = nil
	if _, err := Decode(bad, NewSigner(r.Key)); !errors.Is(err, ErrSignature) {
		t.Errorf("empty signature: err = %v", err)
	}
	bad = clone(frames)
	bad[2] = bad[2][:10]
	if _, err := Decode(bad, NewSigner(r.Key)); !errors.Is(err, ErrSignature) {
		t.Errorf("short signature: err = %v", err)
	}
	// With signing off (empty key) any signature is accepted, per the protocol.
	bad = clone(frames)
	bad[2] = []byte("whatever")
	if _, err := Decode(bad, NewSigner("")); err != nil {
		t.Errorf("unsigned: err = %v", err)
	}
}

func clone(f [][]byte) [][]byte {
	out := make([][]byte, len(f))
	for i := range f {
		out[i] = append([]byte(nil), f[i]...)
	}
	return out
}

func TestEncodeDecodeRoundTrip(t *testing.T) {
	s := NewSigner("k")
	m := &Message{
		Identities: [][]byte{[]byte("a"), []byte("b")},
		Header:     NewHeader(Status, "sess", "u"),
		Parent:     json.RawMessage(`{"msg_id":"p"}`),
		Content:    json.RawMessage(`{"execution_state":"idle"}`),
		Buffers:    [][]byte{{0, 1, 2}},
	}
	frames, err := Encode(m, s)
	if err != nil {
		t.Fatal(err)
	}
	if len(frames) != 2+6+1 || string(frames[2]) != Delimiter || string(frames[6]) != "{}" {
		t.Fatalf("frames = %q", frames)
	}
	got, err := Decode(frames, s)
	if err != nil {
		t.Fatal(err)
	}
	if got.Header != m.Header || string(got.Parent) != `{"msg_id":"p"}` || len(got.Buffers) != 1 || len(got.Identities) != 2 {
		t.Errorf("round trip: %+v", got)
	}
}

func TestDecodeMalformed(t *testing.T) {
	s := NewSigner("")
	ok := func(h string) [][]byte {
		return [][]byte{[]byte(Delimiter), nil, []byte(h), []byte("{}"), []byte("{}"), []byte("{}")}
	}
	cases := []struct {
		name   string
		frames [][]byte
		want   error
	}{
		{"no delimiter", [][]byte{[]byte("x"), []byte("{}")}, ErrNoDelimiter},
		{"short", [][]byte{[]byte(Delimiter), nil, []byte("{}")}, ErrShort},
		{"header not json", ok("{nope"), ErrHeader},
		{"header not object", ok("[1]"), ErrHeader},
		{"no msg_type", ok(`{"msg_id":"1"}`), ErrHeader},
		{"no msg_id", ok(`{"msg_type":"kernel_info_request"}`), ErrHeader},
		{"content not json", [][]byte{[]byte(Delimiter), nil, []byte(`{"msg_id":"1","msg_type":"x"}`), []byte("{}"), []byte("{}"), []byte("{")}, ErrHeader},
	}
	for _, c := range cases {
		_, err := Decode(c.frames, s)
		if !errors.Is(err, c.want) {
			t.Errorf("%s: err = %v, want %v", c.name, err, c.want)
		}
	}
	// A good minimal message decodes, with empty frames read as {}.
	m, err := Decode([][]byte{[]byte(Delimiter), nil, []byte(`{"msg_id":"1","msg_type":"x"}`), nil, nil, nil}, s)
	if err != nil || string(m.Content) != "{}" {
		t.Errorf("minimal: %v %s", err, m.Content)
	}
}

func FuzzDecode(f *testing.F) {
	f.Add([]byte(Delimiter), []byte("sig"), []byte(`{"msg_id":"1","msg_type":"x"}`), []byte("{}"))
	f.Fuzz(func(t *testing.T, a, b, c, d []byte) {
		for _, s := range []*Signer{NewSigner(""), NewSigner("k")} {
			_, _ = Decode([][]byte{a, b, c, d, a, b, c}, s)
			_, _ = Decode([][]byte{a, b, c, d}, s)
		}
	})
}

func TestConnectionFile(t *testing.T) {
	ci, err := ParseConnectionInfo([]byte(`{"shell_port":1,"iopub_port":2,"stdin_port":3,"control_port":4,"hb_port":5,"ip":"127.0.0.1","key":"k","transport":"tcp","signature_scheme":"hmac-sha256","kernel_name":"semiflow"}`))
	if err != nil {
		t.Fatal(err)
	}
	if ci.Endpoint(ci.IOPubPort) != "tcp://127.0.0.1:2" || ci.Key != "k" {
		t.Errorf("got %+v %s", ci, ci.Endpoint(ci.IOPubPort))
	}
	ci.Transport = "ipc"
	ci.IP = "/tmp/kernel-x"
	if got := ci.Endpoint(7); got != "ipc:///tmp/kernel-x-7" {
		t.Errorf("ipc endpoint = %s", got)
	}
	for _, bad := range []string{
		`{`,
		`{"ip":"127.0.0.1","shell_port":1,"iopub_port":2,"stdin_port":3,"control_port":4,"hb_port":0}`,
		`{"ip":"127.0.0.1","shell_port":1,"iopub_port":2,"stdin_port":3,"control_port":4,"hb_port":5,"signature_scheme":"hmac-md5"}`,
		`{"ip":"127.0.0.1","shell_port":1,"iopub_port":2,"stdin_port":3,"control_port":4,"hb_port":5,"transport":"udp"}`,
		`{"shell_port":1,"iopub_port":2,"stdin_port":3,"control_port":4,"hb_port":5}`,
	} {
		if _, err := ParseConnectionInfo([]byte(bad)); !errors.Is(err, ErrConnectionFile) {
			t.Errorf("%s: err = %v", bad, err)
		}
	}
}

func TestReplyType(t *testing.T) {
	for in, want := range map[string]string{"execute_request": "execute_reply", "_request": "", "status": "", "x_request": "x_reply"} {
		if got := ReplyType(in); got != want {
			t.Errorf("ReplyType(%q) = %q, want %q", in, got, want)
		}
	}
}

func TestNewID(t *testing.T) {
	a, b := NewID(), NewID()
	if a == b || len(a) != 36 || a[14] != '4' {
		t.Errorf("ids %s %s", a, b)
	}
}

// Check verifies frames signed by jupyter_client (wire_ref.json, made by
// make_wire_ref.py) without parsing them, and names what is wrong otherwise.
func TestCheckJupyterClientFrames(t *testing.T) {
	r, frames := loadRef(t)
	s := NewSigner(r.Key)
	if d, err := s.Check(frames); err != nil || d != 1 {
		t.Fatalf("Check = %d, %v; want delimiter at 1", d, err)
	}
	tampered := append([][]byte{}, frames...)
	tampered[6] = []byte(`{"code":"2 + 2"}`)
	if _, err := s.Check(tampered); !errors.Is(err, ErrSignature) {
		t.Errorf("changed content: %v", err)
	}
	if _, err := s.Check(frames[:5]); !errors.Is(err, ErrShort) {
		t.Errorf("four frames after the delimiter: %v", err)
	}
	if _, err := s.Check(frames[2:]); !errors.Is(err, ErrNoDelimiter) {
		t.Errorf("no delimiter: %v", err)
	}
	if _, err := NewSigner(r.Key + "x").Check(frames); !errors.Is(err, ErrSignature) {
		t.Errorf("wrong key: %v", err)
	}
}
