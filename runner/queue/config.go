package queue

import (
	"crypto/tls"
	"crypto/x509"
	"errors"
	"fmt"
	"io"
	"net"
	"net/url"
	"os"
	"runtime"
	"slices"
	"strings"

	"github.com/nats-io/nats.go"

	"ordplan/internal/words"
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
	LoginFile string // file holding a user name (first line) and its password (second line)
	TokenFile string // file holding an authentication token
	// Secret is the key shared by the coordinator and every worker: jobs
	// and replies carry an HMAC-SHA256 made with it, and anything without
	// a valid one is discarded. See LoadSecret.
	Secret []byte
	// SecretFile is the file Secret was read from, if any: only for the
	// warning of a file other users may read (OpenSecretFiles).
	SecretFile string
	// FromEnv lists the flags (e.g. "--queue-login") whose file was given
	// by their environment variable (EnvLogin) rather than on the command
	// line, so that messages about the file name the variable instead.
	FromEnv []string
	// Log, when set, hears of the connection to the server lost and made
	// again (the client reconnects without end, so that a restarted
	// server does not end a run) and of errors the server reports on a
	// subscription; without it a lost server left a run waiting in
	// silence until its job deadline. It hears too of secret files other
	// users may read (OpenSecretFiles).
	Log io.Writer
}

// Environment variables that give Config's fields when the flags do not.
const (
	EnvCA         = "ORDPLAN_QUEUE_CA"
	EnvCert       = "ORDPLAN_QUEUE_CERT"
	EnvKey        = "ORDPLAN_QUEUE_KEY"
	EnvCreds      = "ORDPLAN_QUEUE_CREDS"
	EnvNkey       = "ORDPLAN_QUEUE_NKEY"
	EnvLogin      = "ORDPLAN_QUEUE_LOGIN"
	EnvToken      = "ORDPLAN_QUEUE_TOKEN"
	EnvSecretFile = "ORDPLAN_QUEUE_SECRET_FILE"
)

// envOf is the environment variable that gives each file flag.
var envOf = map[string]string{"--queue-ca": EnvCA, "--queue-cert": EnvCert, "--queue-key": EnvKey, "--queue-creds": EnvCreds,
	"--queue-nkey": EnvNkey, "--queue-login": EnvLogin, "--queue-token": EnvToken, "--queue-secret-file": EnvSecretFile}

// givenBy names where the file of flag came from, for a message: the
// flag, or its environment variable when that gave it (FromEnv).
func (cfg Config) givenBy(flag string) string {
	if slices.Contains(cfg.FromEnv, flag) && envOf[flag] != "" {
		return envOf[flag]
	}
	return flag
}

// file is the file path the configuration names, holding what, given by
// flag or its environment variable (givenBy).
func (cfg Config) file(path, what, flag string) fileOption {
	return fileOption{path: path, what: what, flag: cfg.givenBy(flag)}
}

// MinSecretBytes is the shortest shared secret accepted.
const MinSecretBytes = 16

// LoadSecret reads the shared secret from a file: its bytes, without
// surrounding white space, at least MinSecretBytes of them (for example
// `head -c 32 /dev/urandom | base64 > queue.key && chmod 600 queue.key`).
// Messages name the file with the flag or environment variable that gave
// it (givenBy) and say what to do.
func (cfg Config) LoadSecret(path string) ([]byte, error) {
	what := "secret file (" + cfg.givenBy("--queue-secret-file") + ")"
	make := fmt.Sprintf("head -c 32 /dev/urandom | base64 > %s && chmod 600 %s", shellWord(path), shellWord(path))
	if err := regularFile(path, what); err != nil {
		if _, serr := os.Stat(path); errors.Is(serr, os.ErrNotExist) {
			return nil, fmt.Errorf("%v: give the file holding the secret the coordinator and the workers share (one is made by %s, then copied to every machine)", err, make)
		}
		return nil, fmt.Errorf("%v: give the file holding the secret the coordinator and the workers share", err)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("%s %s: %v", what, path, osMsg(err))
	}
	b = []byte(strings.TrimSpace(string(b)))
	if len(b) < MinSecretBytes {
		return nil, fmt.Errorf("%s %s: %d bytes; a shared secret needs at least %d (e.g. %s)", what, path, len(b), MinSecretBytes, make)
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
	var ways []string
	for _, f := range cfg.authFiles() {
		ways = append(ways, f.flag)
	}
	if len(ways) > 1 {
		return fmt.Errorf("%s each say how to authenticate to the server: give one of them", strings.Join(ways, " and "))
	}
	if len(ways) == 1 && urlCredentials(cfg.URL) {
		return fmt.Errorf("the server URL carries a user name or token and %s gives credentials too: give one of them (a file: a URL's password shows in the process list and in shell history)", ways[0])
	}
	for _, f := range append([]fileOption{cfg.file(cfg.CAFile, "CA file", "--queue-ca"), cfg.file(cfg.CertFile, "client certificate", "--queue-cert"),
		cfg.file(cfg.KeyFile, "client key", "--queue-key")}, cfg.authFiles()...) {
		if f.path != "" {
			if err := regularFile(f.path, f.what+" ("+f.flag+")"); err != nil {
				return err
			}
		}
	}
	return cfg.checkPEM()
}

// checkPEM reads the CA file and the client certificate with its key as
// TLS will, so that a file of another kind, or a key of another
// certificate, is named with its flag before connecting.
func (cfg Config) checkPEM() error {
	if cfg.CAFile != "" {
		b, err := os.ReadFile(cfg.CAFile)
		if err != nil {
			return fmt.Errorf("CA file (%s) %s: %v", cfg.givenBy("--queue-ca"), cfg.CAFile, osMsg(err))
		}
		if !x509.NewCertPool().AppendCertsFromPEM(b) {
			return fmt.Errorf("CA file (%s) %s: holds no PEM certificate (-----BEGIN CERTIFICATE-----): give the certificate of the authority that signed the server's", cfg.givenBy("--queue-ca"), cfg.CAFile)
		}
	}
	if cfg.CertFile != "" {
		if _, err := tls.LoadX509KeyPair(cfg.CertFile, cfg.KeyFile); err != nil {
			return fmt.Errorf("client certificate (%s) %s with its key (%s) %s: %v: give a PEM certificate and the PEM private key it was made for", cfg.givenBy("--queue-cert"), cfg.CertFile, cfg.givenBy("--queue-key"), cfg.KeyFile, err)
		}
	}
	return nil
}

// fileOption is a file the configuration names, with what it holds and
// the flag or environment variable that gives it (why: for a secret, what
// whoever reads it can do).
type fileOption struct{ path, what, flag, why string }

// authFiles are the files given to authenticate to the server (at most
// one is allowed).
func (cfg Config) authFiles() []fileOption {
	var out []fileOption
	for _, f := range []fileOption{cfg.file(cfg.CredsFile, "credentials file", "--queue-creds"), cfg.file(cfg.NkeyFile, "nkey file", "--queue-nkey"),
		cfg.file(cfg.LoginFile, "login file", "--queue-login"), cfg.file(cfg.TokenFile, "token file", "--queue-token")} {
		if f.path != "" {
			out = append(out, f)
		}
	}
	return out
}

// secretFiles are the files the configuration names that hold a secret,
// with what whoever reads one can do: the one that authenticates to the
// server, the client key, and the secret shared with the other ordplan
// processes.
func (cfg Config) secretFiles() []fileOption {
	out := cfg.authFiles()
	if cfg.KeyFile != "" {
		out = append(out, cfg.file(cfg.KeyFile, "client key", "--queue-key"))
	}
	const server = "it holds a secret the queue server accepts from whoever shows it"
	for i := range out {
		out[i].why = server
	}
	if cfg.SecretFile != "" {
		f := cfg.file(cfg.SecretFile, "secret file", "--queue-secret-file")
		f.why = "whoever reads it can seal jobs and replies that the workers and the coordinator accept as their own"
		out = append(out, f)
	}
	return out
}

// OpenSecretFiles warns of each file holding a secret for the server
// (secretFiles) that users other than its owner may read: the file, its
// mode and the fix. Nothing on systems whose file modes do not say who
// may read a file (Windows), and never what a file holds.
func (cfg Config) OpenSecretFiles() []string {
	if runtime.GOOS == "windows" {
		return nil
	}
	var out []string
	for _, f := range cfg.secretFiles() {
		fi, err := os.Stat(f.path)
		if err != nil || fi.Mode().Perm()&0o044 == 0 {
			continue
		}
		who := "every user of this machine"
		if fi.Mode().Perm()&0o004 == 0 {
			who = "the other users of its group"
		}
		out = append(out, fmt.Sprintf("%s (%s) %s can be read by %s (mode %04o): %s; let its owner alone read it: chmod 600 %s",
			f.what, f.flag, f.path, who, fi.Mode().Perm(), f.why, shellWord(f.path)))
	}
	return out
}

// shellWord is path as one word of a shell command: in single quotes
// when it holds anything but letters, digits and / . _ - + , : @ %.
func shellWord(path string) string {
	if path != "" && strings.Trim(path, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789/._-+,:@%") == "" {
		return path
	}
	return "'" + strings.ReplaceAll(path, "'", `'\''`) + "'"
}

// urlCredentials tells whether a server URL carries a user name,
// password or token.
func urlCredentials(urls string) bool {
	for _, p := range strings.Split(urls, ",") {
		if u, err := url.Parse(strings.TrimSpace(p)); err != nil && strings.Contains(p, "@") || err == nil && u.User != nil {
			return true
		}
	}
	return false
}

// readLogin reads a login file: the user name on its first line, the
// password on its second, nothing else but blank lines after them. No
// message shows what the file holds.
func readLogin(path string) (user, password string, err error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return "", "", fmt.Errorf("login file (--queue-login) %s: %v", path, osMsg(err))
	}
	lines := strings.Split(strings.ReplaceAll(string(b), "\r\n", "\n"), "\n")
	for len(lines) > 0 && strings.TrimSpace(lines[len(lines)-1]) == "" {
		lines = lines[:len(lines)-1]
	}
	if len(lines) != 2 || strings.TrimSpace(lines[0]) == "" || lines[1] == "" {
		return "", "", fmt.Errorf("login file (--queue-login) %s: it holds %s; it should hold two: the user name on the first, the password on the second", path, words.Count(len(lines), "line", "lines"))
	}
	return strings.TrimSpace(lines[0]), lines[1], nil
}

// readToken reads a token file: one line, the token (surrounding white
// space is not part of it). No message shows what the file holds.
func readToken(path string) (string, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return "", fmt.Errorf("token file (--queue-token) %s: %v", path, osMsg(err))
	}
	tok := strings.TrimSpace(string(b))
	switch {
	case tok == "":
		return "", fmt.Errorf("token file (--queue-token) %s: it is empty; it should hold the token the server expects, on one line", path)
	case strings.ContainsAny(tok, "\r\n"):
		return "", fmt.Errorf("token file (--queue-token) %s: it holds more than one line; it should hold the token alone, on one line", path)
	}
	return tok, nil
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

// explainRefusal words a connection that failed: what the TLS handshake
// or the server refused and which option to look at, the library's own
// message (msg, already without secrets) in brackets.
func (cfg Config) explainRefusal(err error, msg string) string {
	var unknown x509.UnknownAuthorityError
	var host x509.HostnameError
	var invalid x509.CertificateInvalidError
	var dns *net.DNSError
	var timeout net.Error
	auth := cfg.authFiles()
	switch {
	case errors.Is(err, nats.ErrNoServers):
		return fmt.Sprintf("cannot reach the queue server (%s): check that it runs at that address and that --queue names it", msg)
	case errors.As(err, &dns):
		return fmt.Sprintf("cannot find the queue server's host %s (%s): check the host name in --queue, or give its address", dns.Name, msg)
	case errors.As(err, &timeout) && timeout.Timeout():
		return fmt.Sprintf("cannot reach the queue server: no answer in time (%s): check that it runs at that address, that --queue names it and that no firewall blocks the port", msg)
	case errors.As(err, &unknown) && cfg.CAFile != "":
		return fmt.Sprintf("the server's TLS certificate is not signed by an authority in the CA file (--queue-ca) %s: give the CA file that signed the server's certificate (%s)", cfg.CAFile, msg)
	case errors.As(err, &unknown):
		return fmt.Sprintf("the server's TLS certificate is not signed by an authority this machine trusts: give the CA file that signed it with --queue-ca FILE (or %s) (%s)", EnvCA, msg)
	case errors.As(err, &host):
		return fmt.Sprintf("the server's TLS certificate is not for the host that --queue names: give the name or address the certificate is for (%s)", msg)
	case errors.As(err, &invalid):
		return fmt.Sprintf("the server's TLS certificate cannot be used (%s): renew it on the server", msg)
	case remoteTLSRefusal(msg) && cfg.CertFile == "":
		return fmt.Sprintf("the server asks for a client certificate: give --queue-cert FILE --queue-key FILE (or %s and %s) (%s)", EnvCert, EnvKey, msg)
	case remoteTLSRefusal(msg):
		return fmt.Sprintf("the server refused the client certificate (--queue-cert) %s: it is not signed by an authority the server trusts, or is not valid now (%s)", cfg.CertFile, msg)
	case strings.Contains(msg, "connection closed by remote after TLS handshake") && cfg.CertFile == "":
		// TLS 1.3: the server checks the client's certificate after the
		// handshake, and its alert may come after the connection closed.
		return fmt.Sprintf("the server closed the connection after the TLS handshake, as a server does that asks for a client certificate: give --queue-cert FILE --queue-key FILE (or %s and %s) (%s)", EnvCert, EnvKey, msg)
	case strings.Contains(msg, "connection closed by remote after TLS handshake"):
		return fmt.Sprintf("the server closed the connection after the TLS handshake, as a server does that refuses the client certificate (--queue-cert) %s: is it signed by an authority the server trusts, and valid now? (%s)", cfg.CertFile, msg)
	case errors.Is(err, nats.ErrSecureConnWanted):
		return fmt.Sprintf("the server does not offer TLS, which a tls:// URL or --queue-ca asks for: give nats://HOST:PORT without --queue-ca, or turn TLS on at the server (%s)", msg)
	case errors.Is(err, nats.ErrAuthorization) && len(auth) == 0 && !urlCredentials(cfg.URL):
		return fmt.Sprintf("the server asks for credentials and none were given: give --queue-login FILE, --queue-token FILE, --queue-nkey FILE or --queue-creds FILE (or %s, %s, %s, %s) (%s)", EnvLogin, EnvToken, EnvNkey, EnvCreds, msg)
	case errors.Is(err, nats.ErrAuthorization) || errors.Is(err, nats.ErrAuthExpired) || errors.Is(err, nats.ErrAuthRevoked):
		given := "the user name and password (or token) in the --queue URL"
		if len(auth) > 0 {
			given = fmt.Sprintf("those of the %s (%s) %s", auth[0].what, auth[0].flag, auth[0].path)
		}
		why := "check them against the server's authorization settings"
		switch {
		case errors.Is(err, nats.ErrAuthExpired):
			why = "they have expired"
		case errors.Is(err, nats.ErrAuthRevoked):
			why = "they have been revoked"
		}
		return fmt.Sprintf("the server refused the credentials, %s: %s (%s)", given, why, msg)
	}
	return msg
}

// remoteTLSRefusal tells whether the server ended the TLS handshake over
// the client's certificate: none given, or one it does not accept.
func remoteTLSRefusal(msg string) bool {
	for _, s := range []string{"tls: certificate required", "tls: bad certificate", "tls: unknown certificate authority", "tls: certificate unknown", "tls: expired certificate"} {
		if strings.Contains(msg, s) {
			return true
		}
	}
	return false
}
