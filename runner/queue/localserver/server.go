package localserver

import (
	"errors"
	"testing"
	"time"

	"github.com/nats-io/nats-server/v2/server"
)

// Start runs a JetStream server on 127.0.0.1 at a free port, storing its
// streams under dir. The caller calls Shutdown (and WaitForShutdown).
func Start(dir string) (*server.Server, error) {
	s, err := server.NewServer(&server.Options{
		ServerName: "ordplan-local",
		Host:       "127.0.0.1",
		Port:       server.RANDOM_PORT,
		JetStream:  true,
		StoreDir:   dir,
		NoLog:      true,
		NoSigs:     true,
	})
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
	s, err := Start(tb.TempDir())
	if err != nil {
		tb.Fatal(err)
	}
	tb.Cleanup(func() {
		s.Shutdown()
		s.WaitForShutdown()
	})
	return s.ClientURL()
}
