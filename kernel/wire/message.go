package wire

import (
	"bytes"
	"crypto/hmac"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"time"

	"github.com/google/uuid"
)

// Delimiter separates the routing identities from the message proper.
const Delimiter = "<IDS|MSG>"

// ProtocolVersion is the version of the messaging protocol spoken here.
const ProtocolVersion = "5.3"

// Header is a message header. MsgID and MsgType are required on receipt.
type Header struct {
	MsgID    string `json:"msg_id"`
	Session  string `json:"session"`
	Username string `json:"username"`
	Date     string `json:"date"`
	MsgType  string `json:"msg_type"`
	Version  string `json:"version"`
}

// Message is one decoded Jupyter message. Parent, Metadata and Content are
// kept as raw JSON so that a reply can carry the request's header byte for
// byte and so that a malformed content is reported by the handler that
// knows its schema.
type Message struct {
	Identities [][]byte
	Header     Header
	// RawHeader is the header frame as received; it is the parent_header
	// of every message sent in response.
	RawHeader json.RawMessage
	Parent    json.RawMessage
	Metadata  json.RawMessage
	Content   json.RawMessage
	Buffers   [][]byte
}

// Errors returned by Decode. Each is wrapped with detail.
var (
	ErrNoDelimiter = errors.New("wire: no <IDS|MSG> delimiter")
	ErrShort       = errors.New("wire: fewer than five frames after the delimiter")
	ErrSignature   = errors.New("wire: bad signature")
	ErrHeader      = errors.New("wire: bad header")
)

// Signer computes and checks message signatures. The zero value (and a
// Signer with an empty key) signs nothing and accepts every signature.
type Signer struct {
	key []byte
}

// NewSigner returns a Signer for HMAC-SHA256 under key.
func NewSigner(key string) *Signer { return &Signer{key: []byte(key)} }

// Enabled reports whether messages are signed.
func (s *Signer) Enabled() bool { return s != nil && len(s.key) > 0 }

// Sign returns the hex HMAC-SHA256 of the concatenated parts, or "" when
// signing is off.
func (s *Signer) Sign(parts ...[]byte) string {
	if !s.Enabled() {
		return ""
	}
	return hex.EncodeToString(s.mac(parts))
}

func (s *Signer) mac(parts [][]byte) []byte {
	var h hash.Hash = hmac.New(sha256.New, s.key)
	for _, p := range parts {
		h.Write(p)
	}
	return h.Sum(nil)
}

// Verify reports whether sig is the signature of parts, comparing in
// constant time. With signing off every signature is accepted. A signature
// that is not lower- or upper-case hex of the right length is rejected.
func (s *Signer) Verify(sig []byte, parts ...[]byte) bool {
	if !s.Enabled() {
		return true
	}
	got := make([]byte, hex.DecodedLen(len(sig)))
	if _, err := hex.Decode(got, sig); err != nil || len(got) != sha256.Size {
		return false
	}
	return hmac.Equal(got, s.mac(parts))
}

// Check finds the delimiter among frames and verifies the signature of the
// four JSON frames after it, without parsing them. It returns the
// delimiter's index, or ErrNoDelimiter, ErrShort or ErrSignature.
func (s *Signer) Check(frames [][]byte) (delim int, err error) {
	d := -1
	for i, f := range frames {
		if string(f) == Delimiter {
			d = i
			break
		}
	}
	if d < 0 {
		return d, ErrNoDelimiter
	}
	rest := frames[d+1:]
	if len(rest) < 5 {
		return d, fmt.Errorf("%w: got %d", ErrShort, len(rest))
	}
	sig := rest[0]
	if s.Enabled() && len(sig) == 0 {
		return d, fmt.Errorf("%w: empty signature", ErrSignature)
	}
	if !s.Verify(sig, rest[1], rest[2], rest[3], rest[4]) {
		return d, fmt.Errorf("%w: HMAC does not match", ErrSignature)
	}
	return d, nil
}

// Decode parses the frames of one message and checks its signature. It
// never panics on hostile input. The header must be a JSON object with a
// non-empty msg_id and msg_type; the other three JSON frames are checked
// only for being valid JSON (an empty frame is read as {}).
func Decode(frames [][]byte, s *Signer) (*Message, error) {
	d, err := s.Check(frames)
	if err != nil {
		return nil, err
	}
	rest := frames[d+1:]
	hdr, parent, meta, content := rest[1], rest[2], rest[3], rest[4]
	m := &Message{
		Identities: frames[:d],
		RawHeader:  hdr,
		Parent:     orEmpty(parent),
		Metadata:   orEmpty(meta),
		Content:    orEmpty(content),
		Buffers:    rest[5:],
	}
	if err := json.Unmarshal(hdr, &m.Header); err != nil {
		return m, fmt.Errorf("%w: %v", ErrHeader, err)
	}
	if m.Header.MsgType == "" {
		return m, fmt.Errorf("%w: missing msg_type", ErrHeader)
	}
	if m.Header.MsgID == "" {
		return m, fmt.Errorf("%w: missing msg_id", ErrHeader)
	}
	for _, f := range []struct {
		name string
		b    []byte
	}{{"parent_header", m.Parent}, {"metadata", m.Metadata}, {"content", m.Content}} {
		if !json.Valid(f.b) {
			return m, fmt.Errorf("%w: %s is not valid JSON", ErrHeader, f.name)
		}
	}
	return m, nil
}

func orEmpty(b []byte) json.RawMessage {
	if len(bytes.TrimSpace(b)) == 0 {
		return json.RawMessage("{}")
	}
	return b
}

// Encode returns the frames of m, signed by s. A nil Parent, Metadata or
// Content is sent as {}. The header frame is RawHeader when set, else the
// JSON of Header.
func Encode(m *Message, s *Signer) ([][]byte, error) {
	hdr := []byte(m.RawHeader)
	if len(hdr) == 0 {
		var err error
		if hdr, err = json.Marshal(m.Header); err != nil {
			return nil, err
		}
	}
	parent, meta, content := orEmpty(m.Parent), orEmpty(m.Metadata), orEmpty(m.Content)
	frames := make([][]byte, 0, len(m.Identities)+6+len(m.Buffers))
	frames = append(frames, m.Identities...)
	frames = append(frames, []byte(Delimiter), []byte(s.Sign(hdr, parent, meta, content)), hdr, parent, meta, content)
	frames = append(frames, m.Buffers...)
	return frames, nil
}

// NewHeader returns a header for a new message of the given type in
// session, with a fresh random msg_id and the current UTC time.
func NewHeader(msgType, session, username string) Header {
	return Header{
		MsgID:    NewID(),
		Session:  session,
		Username: username,
		Date:     time.Now().UTC().Format("2006-01-02T15:04:05.000000Z07:00"),
		MsgType:  msgType,
		Version:  ProtocolVersion,
	}
}

// NewID returns a random RFC 4122 version-4 UUID in its text form.
func NewID() string { return uuid.NewString() }
