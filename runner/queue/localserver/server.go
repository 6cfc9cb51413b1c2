package localserver

import (
	"crypto/tls"
	"errors"
	"testing"
	"time"

	"github.com/nats-io/nats-server/v2/server"
)

// Options secure a local server: with TLS set, clients must use TLS (and
// present a certificate the configuration verifies, if it asks); with
// Nkeys set, clients must authenticate with one of these user nkeys.
type Options struct {
	TLS   *tls.Config
	Nkeys []string // public user nkeys (U...)
}

// Start runs a JetStream server on 127.0.0.1 at a free port, storing its
// streams under dir. The caller calls Shutdown (and WaitForShutdown).
func Start(dir string) (*server.Server, error) {
	return StartWith(dir, Options{})
}

// StartWith is Start with TLS or nkey authentication.
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

// ForTestWith is ForTest with TLS or nkey authentication.
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
