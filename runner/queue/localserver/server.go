package localserver

import (
	"crypto/tls"
	"errors"
	"testing"
	"time"

	"github.com/nats-io/jwt/v2"
	"github.com/nats-io/nats-server/v2/server"
)

// Options secure a local server: with TLS set, clients must use TLS (and
// present a certificate the configuration verifies, if it asks); with
// Nkeys set, clients must authenticate with one of these user nkeys.
type Options struct {
	TLS   *tls.Config
	Nkeys []string // public user nkeys (U...)
	// Logins are user names and their passwords (name -> password);
	// with them, clients must give one.
	Logins map[string]string
	// Token, when set, is the token clients must give (not with Logins
	// or Nkeys).
	Token string
	// Operator, when set, runs the server in operator mode: clients
	// authenticate with a credentials file (a user JWT issued by one of
	// Accounts, and its nkey seed).
	Operator *Operator
}

// Operator is the trust chain of a server in operator mode: the operator's
// JWT, the system account's public key and the account JWTs by public key
// (each account that runs jobs needs JetStream limits).
type Operator struct {
	JWT           string
	SystemAccount string
	Accounts      map[string]string
}

// Start runs a JetStream server on 127.0.0.1 at a free port, storing its
// streams under dir. The caller calls Shutdown (and WaitForShutdown).
func Start(dir string) (*server.Server, error) {
	return StartWith(dir, Options{})
}

// StartWith is Start with TLS or authentication (nkeys, logins or a token).
func StartWith(dir string, o Options) (*server.Server, error) {
	opts := &server.Options{
		ServerName: "ordplan-local",
		Host:       "127.0.0.1",
		Port:       server.RANDOM_PORT,
		JetStream:  true,
		StoreDir:   dir,
		NoLog:      true,
		NoSigs:     true,
	}
	if o.TLS != nil {
		opts.TLS = true
		opts.TLSConfig = o.TLS
		opts.TLSVerify = o.TLS.ClientAuth == tls.RequireAndVerifyClientCert
		opts.TLSTimeout = 5
	}
	for _, k := range o.Nkeys {
		opts.Nkeys = append(opts.Nkeys, &server.NkeyUser{Nkey: k})
	}
	for name, password := range o.Logins {
		opts.Users = append(opts.Users, &server.User{Username: name, Password: password})
	}
	opts.Authorization = o.Token
	if op := o.Operator; op != nil {
		claims, err := jwt.DecodeOperatorClaims(op.JWT)
		if err != nil {
			return nil, err
		}
		r := &server.MemAccResolver{}
		for pub, acc := range op.Accounts {
			if err := r.Store(pub, acc); err != nil {
				return nil, err
			}
		}
		opts.TrustedOperators = []*jwt.OperatorClaims{claims}
		opts.SystemAccount = op.SystemAccount
		opts.AccountResolver = r
	}
	s, err := server.NewServer(opts)
	if err != nil {
		return nil, err
	}
	go s.Start()
	if !s.ReadyForConnections(10 * time.Second) {
		s.Shutdown()
		return nil, errors.New("the local NATS server did not start within 10 s")
	}
	return s, nil
}

// ForTest starts a server for a test in a temporary folder, stops it when
// the test ends, and returns its URL.
func ForTest(tb testing.TB) string {
	tb.Helper()
	return ForTestWith(tb, Options{})
}

// ForTestWith is ForTest with TLS or authentication.
func ForTestWith(tb testing.TB, o Options) string {
	tb.Helper()
	s, err := StartWith(tb.TempDir(), o)
	if err != nil {
		tb.Fatal(err)
	}
	tb.Cleanup(func() {
		s.Shutdown()
		s.WaitForShutdown()
	})
	return s.ClientURL()
}
