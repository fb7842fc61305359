package service

import (
	"bufio"
	"io"
	"sync"
	"time"
)

// Log lines are written through a buffer that is flushed when it fills,
// every LogFlushInterval, and on Close: one system call per batch of
// lines instead of one per request, which at a few thousand requests a
// second is a measurable share of a core. A line is out at most
// LogFlushInterval after it was logged; a crash can lose that much, a
// clean stop loses nothing.

// LogFlushInterval is how long a log line may wait in the buffer.
const LogFlushInterval = 100 * time.Millisecond

// logBufferBytes is the buffer size; a full buffer is written at once.
const logBufferBytes = 32 << 10

// bufferedWriter is an io.Writer safe for concurrent use that batches
// writes to w.
type bufferedWriter struct {
	mu   sync.Mutex
	buf  *bufio.Writer
	stop chan struct{}
	done chan struct{}
}

// newBufferedWriter starts the periodic flush; Close stops it.
func newBufferedWriter(w io.Writer) *bufferedWriter {
	b := &bufferedWriter{buf: bufio.NewWriterSize(w, logBufferBytes), stop: make(chan struct{}), done: make(chan struct{})}
	go b.flushLoop()
	return b
}

func (b *bufferedWriter) Write(p []byte) (int, error) {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.buf.Write(p)
}

// Flush writes what is buffered.
func (b *bufferedWriter) Flush() error {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.buf.Flush()
}

func (b *bufferedWriter) flushLoop() {
	defer close(b.done)
	t := time.NewTicker(LogFlushInterval)
	defer t.Stop()
	for {
		select {
		case <-t.C:
			_ = b.Flush()
		case <-b.stop:
			return
		}
	}
}

// Close stops the periodic flush and writes what is left.
func (b *bufferedWriter) Close() error {
	close(b.stop)
	<-b.done
	return b.Flush()
}
