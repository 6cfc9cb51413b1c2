package queue

import (
	"net"
	"os"
	"strings"
	"syscall"
	"testing"
	"time"
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

// A worker's cache folder that fills up (or stops taking files) while it
// runs is named with what to do, in the fault the run stops with
// (catalogue Q23); it said only "data cache: write ...".
func TestCacheFailureWorded(t *testing.T) {
	dc := newDataCache("/var/cache/ordplan")
	full := &os.PathError{Op: "write", Path: "/var/cache/ordplan/abc.1.part", Err: syscall.ENOSPC}
	want := "data cache /var/cache/ordplan: the folder is full (write /var/cache/ordplan/abc.1.part: no space left on device): free space there, or give --cache a folder with room for the data files"
	if got := dc.failed(full).Error(); got != want {
		t.Errorf("got\n%s\nwant\n%s", got, want)
	}
	denied := &os.PathError{Op: "open", Path: "/var/cache/ordplan/abc.1.part", Err: syscall.EACCES}
	want = "data cache /var/cache/ordplan: open /var/cache/ordplan/abc.1.part: permission denied (give --cache a folder this worker can write)"
	if got := dc.failed(denied).Error(); got != want {
		t.Errorf("got\n%s\nwant\n%s", got, want)
	}
}

// A worker whose --ack-wait differs from that of the workers running on
// the server keeps to theirs, saying so, instead of changing their shared
// consumer (catalogue Q24).
func TestAckWaitOfRunningWorkersKept(t *testing.T) {
	q := newTestQueue(t, 30*time.Second)
	startWorker(t, q.url, "w5s", 5*time.Second, 0)
	log := startWorker(t, q.url, "w7s", 7*time.Second, 0)
	want := "ordplan worker w7s: warning: --ack-wait 7s not taken: the workers running on this server have an ack wait of 5s, which this worker keeps to (the workers share it: a new value would apply to them too while their in-progress acknowledgements keep to theirs, and their long jobs would go to other workers as if they had died); to change it, stop every worker and start them all with the new value\nordplan worker w7s: ready (1 at once, ack wait 5s;"
	if !strings.Contains(log.String(), want) {
		t.Errorf("got\n%s\nwant\n%s", log, want)
	}
	cons, err := q.c.js.Consumer(q.ctx, JobStream, WorkerGroup)
	if err != nil {
		t.Fatal(err)
	}
	if info, err := cons.Info(q.ctx); err != nil || info.Config.AckWait != 5*time.Second {
		t.Errorf("the consumer's ack wait: %v (%v), want 5s", info.Config.AckWait, err)
	}
}
