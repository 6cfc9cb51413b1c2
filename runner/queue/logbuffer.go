package queue

import (
	"bytes"
	"io"
	"strings"
	"sync"
)

// LogBuffer is an in-memory log that several goroutines (or a child
// process's output copier) can write while another reads it.
type LogBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

// Write appends p.
func (l *LogBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

// String returns everything written so far.
func (l *LogBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// Count returns how many times s was written.
func (l *LogBuffer) Count(s string) int {
	return strings.Count(l.String(), s)
}

// WorkerLabel is how every line a worker writes begins, before ": ": the
// program, the command and the worker's name (by default host-pid), so
// that a worker's lines are told apart from a coordinator's (which begin
// "queue:" or "ordplan:") and from another worker's.
func WorkerLabel(name string) string {
	return "ordplan worker " + name
}

// WorkerLines returns a writer that starts every line written to out with
// WorkerLabel(name) and ": ". Each complete line reaches out in one
// Write; a line not yet ended waits for its end. Worker.Run writes its log
// through it, and the worker command everything else it says.
func WorkerLines(out io.Writer, name string) io.Writer {
	if out == nil {
		return nil
	}
	return &prefixed{out: out, prefix: []byte(WorkerLabel(name) + ": ")}
}

type prefixed struct {
	mu      sync.Mutex
	out     io.Writer
	prefix  []byte
	pending []byte
}

func (p *prefixed) Write(b []byte) (int, error) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.pending = append(p.pending, b...)
	for {
		i := bytes.IndexByte(p.pending, '\n')
		if i < 0 {
			return len(b), nil
		}
		line := append(append([]byte(nil), p.prefix...), p.pending[:i+1]...)
		p.pending = p.pending[i+1:]
		if _, err := p.out.Write(line); err != nil {
			return len(b), err
		}
	}
}
