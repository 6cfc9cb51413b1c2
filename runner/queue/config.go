package queue

import (
	"errors"
	"fmt"
	"io"
	"net/url"
	"os"
	"strings"
)

// Config says how to reach the JetStream server and how to authenticate
// to it and to the other ordplan processes.
type Config struct {
	URL  string // nats://HOST:PORT or tls://HOST:PORT; several separated by commas
	Name string // identifies the client to the server
	// Transport security and credentials towards the server.
	CAFile    string // PEM certificates of the authorities that sign the server's certificate
	CertFile  string // PEM client certificate (with KeyFile), when the server verifies clients
	KeyFile   string // PEM private key of CertFile
	CredsFile string // NATS credentials file (user JWT and nkey seed)
	NkeyFile  string // file holding an nkey seed (SU...)
	// Secret is the key shared by the coordinator and every worker: jobs
	// and replies carry an HMAC-SHA256 made with it, and anything without
	// a valid one is discarded. See LoadSecret.
	Secret []byte
	// Log, when set, hears of the connection to the server lost and made
	// again (the client reconnects without end, so that a restarted
	// server does not end a run) and of errors the server reports on a
	// subscription; without it a lost server left a run waiting in
	// silence until its job deadline.
	Log io.Writer
}

// Environment variables that give Config's fields when the flags do not.
const (
	EnvCA         = "ORDPLAN_QUEUE_CA"
	EnvCert       = "ORDPLAN_QUEUE_CERT"
	EnvKey        = "ORDPLAN_QUEUE_KEY"
	EnvCreds      = "ORDPLAN_QUEUE_CREDS"
	EnvNkey       = "ORDPLAN_QUEUE_NKEY"
	EnvSecretFile = "ORDPLAN_QUEUE_SECRET_FILE"
)

// MinSecretBytes is the shortest shared secret accepted.
const MinSecretBytes = 16

// LoadSecret reads the shared secret from a file: its bytes, without
// surrounding white space, at least MinSecretBytes of them (for example
// `head -c 32 /dev/urandom | base64 > queue.key`).
func LoadSecret(path string) ([]byte, error) {
	if err := regularFile(path, "secret file"); err != nil {
		return nil, err
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("secret file %s: %v", path, osMsg(err))
	}
	b = []byte(strings.TrimSpace(string(b)))
	if len(b) < MinSecretBytes {
		return nil, fmt.Errorf("secret file %s: %d bytes; a shared secret needs at least %d (e.g. head -c 32 /dev/urandom | base64 > %s)", path, len(b), MinSecretBytes, path)
	}
	return b, nil
}

// check verifies that the files the configuration names exist and that
// the certificate comes with its key.
func (cfg Config) check() error {
	if cfg.URL == "" {
		return errors.New("no server URL")
	}
	for _, u := range strings.Split(cfg.URL, ",") {
		u = strings.TrimSpace(u)
		scheme, _, has := strings.Cut(u, "://")
		if !has {
			continue // HOST:PORT, read as nats://HOST:PORT
		}
		switch strings.ToLower(scheme) {
		case "nats", "tls", "ws", "wss":
		default:
			return fmt.Errorf("%q is not a scheme the queue server speaks: give nats://HOST:PORT (or tls://, ws://, wss://)", scheme)
		}
	}
	if len(cfg.Secret) < MinSecretBytes {
		return fmt.Errorf("no shared secret (give a secret file of at least %d bytes to the coordinator and every worker)", MinSecretBytes)
	}
	if (cfg.CertFile == "") != (cfg.KeyFile == "") {
		return errors.New("a client certificate needs its key and a key its certificate (--queue-cert and --queue-key)")
	}
	if cfg.CredsFile != "" && cfg.NkeyFile != "" {
		return errors.New("give a credentials file or an nkey file, not both")
	}
	for _, f := range []struct{ path, what string }{
		{cfg.CAFile, "CA file"}, {cfg.CertFile, "client certificate"}, {cfg.KeyFile, "client key"},
		{cfg.CredsFile, "credentials file"}, {cfg.NkeyFile, "nkey file"},
	} {
		if f.path != "" {
			if err := regularFile(f.path, f.what); err != nil {
				return err
			}
		}
	}
	return nil
}

// regularFile refuses a path that is absent or not a regular file.
func regularFile(path, what string) error {
	fi, err := os.Stat(path)
	if err != nil {
		return fmt.Errorf("%s %s: %v", what, path, osMsg(err))
	}
	if !fi.Mode().IsRegular() {
		return fmt.Errorf("%s %s: not a regular file", what, path)
	}
	return nil
}

func osMsg(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// Redact returns the server URL(s) with any password replaced by "xxxxx",
// for messages.
func Redact(urls string) string {
	parts := strings.Split(urls, ",")
	for i, p := range parts {
		u, err := url.Parse(strings.TrimSpace(p))
		if err != nil {
			if strings.Contains(p, "@") {
				parts[i] = "(a URL with credentials)"
			}
			continue
		}
		if u.User != nil {
			if _, has := u.User.Password(); has {
				u.User = url.UserPassword(u.User.Username(), "xxxxx")
			} else if u.User.Username() != "" {
				u.User = url.User("xxxxx") // a token
			}
			parts[i] = u.String()
		}
	}
	return strings.Join(parts, ",")
}

// scrub removes the URL's passwords and tokens from a message.
func scrub(msg, urls string) string {
	for _, p := range strings.Split(urls, ",") {
		u, err := url.Parse(strings.TrimSpace(p))
		if err != nil || u.User == nil {
			continue
		}
		if pw, has := u.User.Password(); has && pw != "" {
			msg = strings.ReplaceAll(msg, pw, "xxxxx")
		} else if tok := u.User.Username(); !has && tok != "" {
			msg = strings.ReplaceAll(msg, tok, "xxxxx")
		}
	}
	return msg
}
