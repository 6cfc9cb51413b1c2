package queue

import (
	"net"
	"os"
	"testing"
)

// A server address that does not answer in time (a firewall dropping the
// port) is worded with what to check, as one that refuses (catalogue Q22).
func TestUnreachableServerWorded(t *testing.T) {
	err := &net.OpError{Op: "read", Net: "tcp", Err: os.ErrDeadlineExceeded}
	got := Config{URL: "nats://10.255.255.1:4222"}.explainRefusal(err, err.Error())
	want := "cannot reach the queue server: no answer in time (read tcp: i/o timeout): check that it runs at that address, that --queue names it and that no firewall blocks the port"
	if got != want {
		t.Errorf("got\n%s\nwant\n%s", got, want)
	}
}
