package queue

import (
	"bytes"
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
