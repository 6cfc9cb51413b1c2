package queue

import (
	"context"
	"net"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats-server/v2/server"

	"ordplan/runner/queue/localserver"
)

// A client whose server stops says so on its log, and again when the
// server, restarted on the same port and store, answers; closing the
// connection itself is not reported as a loss.
func TestConnectionLostAndFoundIsLogged(t *testing.T) {
	dir := t.TempDir()
	s1, err := localserver.Start(dir)
	if err != nil {
		t.Fatal(err)
	}
	url, port := s1.ClientURL(), s1.Addr().(*net.TCPAddr).Port
	log := &LogBuffer{}
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	c, err := Connect(ctx, Config{URL: url, Name: "reconnect-test", Secret: testSecret, Log: log})
	if err != nil {
		t.Fatal(err)
	}
	s1.Shutdown()
	s1.WaitForShutdown()
	waitFor(t, 10*time.Second, "the loss logged", func() bool { return strings.Contains(log.String(), "queue: lost the connection to the server "+url) })
	opts := &server.Options{ServerName: "ordplan-local", Host: "127.0.0.1", Port: port, JetStream: true, StoreDir: dir, NoLog: true, NoSigs: true}
	s2, err := server.NewServer(opts)
	if err != nil {
		t.Fatal(err)
	}
	go s2.Start()
	defer func() { s2.Shutdown(); s2.WaitForShutdown() }()
	waitFor(t, 20*time.Second, "the reconnection logged", func() bool { return strings.Contains(log.String(), "queue: connected to the server "+url+" again") })
	c.Close()
	time.Sleep(200 * time.Millisecond)
	if n := strings.Count(log.String(), "lost the connection"); n != 1 {
		t.Errorf("losses logged %d times:\n%s", n, log.String())
	}
	if !strings.Contains(log.String(), "trying again every 0.5s until it answers, waiting meanwhile (an interrupt stops the command)") {
		t.Errorf("log:\n%s", log.String())
	}
}
