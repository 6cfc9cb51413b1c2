package queue

import (
	"crypto/hmac"
	"crypto/sha256"
	"errors"
	"fmt"
)

// Messages on the queue are sealed: a prefix, a kind byte, the
// HMAC-SHA256 (with the shared secret) of the kind, the name the message
// is stored under (the job's subject or the reply's key) and the payload,
// then the payload. A message moved to another name, changed, or made
// without the secret does not open.
const (
	sealMagic = "OPQ1"
	sealTask  = 'T' // a gob Task, named by its subject
	sealReply = 'R' // a gob Reply, named by its key
	sealRef   = 'O' // a gob objectRef: the reply is in the replies store
	// The give-back headers of a job message (giveBackSeal): not a
	// sealed message of its own, a header's HMAC.
	sealGiveBack = 'G'
	sealHead     = len(sealMagic) + 1 + sha256.Size
)

func mac(key []byte, kind byte, name string, payload []byte) []byte {
	h := hmac.New(sha256.New, key)
	h.Write([]byte(formatVersion))
	h.Write([]byte{0, kind, 0})
	h.Write([]byte(name))
	h.Write([]byte{0})
	h.Write(payload)
	return h.Sum(nil)
}

func seal(key []byte, kind byte, name string, payload []byte) []byte {
	out := make([]byte, 0, sealHead+len(payload))
	out = append(out, sealMagic...)
	out = append(out, kind)
	out = append(out, mac(key, kind, name, payload)...)
	return append(out, payload...)
}

var errUnsealed = errors.New("not authenticated: no valid HMAC with the shared secret (a process without the secret wrote it, or the coordinator and the worker use different secrets)")

// errSealMismatch is errUnsealed for a message in ordplan's sealed form
// whose HMAC does not match: changed, or sealed with another secret or by
// another version of ordplan, which a worker cannot tell apart; a
// message without the form is errUnsealed alone.
var errSealMismatch = fmt.Errorf("%w", errUnsealed)

// open checks a sealed message stored under name and returns its kind and
// payload.
func open(key []byte, name string, b []byte) (byte, []byte, error) {
	if len(b) < sealHead || string(b[:len(sealMagic)]) != sealMagic {
		return 0, nil, fmt.Errorf("%w; %d bytes without the ordplan header", errUnsealed, len(b))
	}
	kind := b[len(sealMagic)]
	sum, payload := b[len(sealMagic)+1:sealHead], b[sealHead:]
	if !hmac.Equal(sum, mac(key, kind, name, payload)) {
		return 0, nil, errSealMismatch
	}
	return kind, payload, nil
}

// objectRef points to a reply too large for one message.
type objectRef struct {
	Object string // name in the replies store
	Size   int
}
