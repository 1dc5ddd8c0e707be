package logger

import "io"

// chunk is one Read's bytes, or the error that ended the reading.
type chunk struct {
	b   []byte
	err error
}

// chunkReader reads a port in its own goroutine and hands the bytes over in chunks, so
// that the recording loop can wait for bytes, its ticker and a stop at once. Buffers go
// round a fixed pool: memory does not grow with time, and a slow consumer makes the
// reader wait (the port's own buffer then holds the bytes).
type chunkReader struct {
	chunks chan chunk
	free   chan []byte
	quit   chan struct{}
}

const (
	chunkSize  = 16 << 10
	chunkCount = 8
)

func newChunkReader(r io.Reader) *chunkReader {
	c := &chunkReader{
		chunks: make(chan chunk, chunkCount),
		free:   make(chan []byte, chunkCount),
		quit:   make(chan struct{}),
	}
	for i := 0; i < chunkCount; i++ {
		c.free <- make([]byte, chunkSize)
	}
	go c.run(r)
	return c
}

func (c *chunkReader) run(r io.Reader) {
	for {
		var buf []byte
		select {
		case buf = <-c.free:
		case <-c.quit:
			return
		}
		n, err := r.Read(buf[:cap(buf)])
		if n > 0 {
			select {
			case c.chunks <- chunk{b: buf[:n]}:
			case <-c.quit:
				return
			}
		} else {
			c.free <- buf
		}
		if err != nil {
			select {
			case c.chunks <- chunk{err: err}:
			case <-c.quit:
			}
			return
		}
	}
}

// release gives a chunk's buffer back to the pool.
func (c *chunkReader) release(ch chunk) {
	if ch.b != nil {
		select {
		case c.free <- ch.b[:0]:
		default:
		}
	}
}

// stop ends the goroutine once its Read returns (close the port to make it return).
func (c *chunkReader) stop() {
	select {
	case <-c.quit:
	default:
		close(c.quit)
	}
}
