package loggertest

import (
	"bytes"
	"sync"
)

// Buffer is a bytes.Buffer safe for one goroutine writing (a recorder's status line) while
// another reads (the test waiting for it).
type Buffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *Buffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

// String returns what was written so far.
func (s *Buffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}
