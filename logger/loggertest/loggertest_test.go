package loggertest

import (
	"errors"
	"io"
	"sync"
	"testing"
	"time"
)

func TestFeedReadUnplug(t *testing.T) {
	p := NewPort()
	p.SetMaxRead(3)
	p.Feed([]byte("hello"))
	p.Unplug()
	b := make([]byte, 10)
	n, err := p.Read(b)
	if n != 3 || err != nil || string(b[:n]) != "hel" {
		t.Fatalf("first read %q %v", b[:n], err)
	}
	n, _ = p.Read(b)
	if string(b[:n]) != "lo" {
		t.Fatalf("second read %q", b[:n])
	}
	if _, err := p.Read(b); !errors.Is(err, ErrUnplugged) {
		t.Fatalf("after unplug: %v", err)
	}
}

func TestCloseUnblocksRead(t *testing.T) {
	p := NewPort()
	done := make(chan error)
	go func() { _, err := p.Read(make([]byte, 4)); done <- err }()
	time.Sleep(10 * time.Millisecond)
	p.Close()
	p.Close()
	select {
	case err := <-done:
		if !errors.Is(err, ErrClosed) {
			t.Fatalf("read after close: %v", err)
		}
	case <-time.After(time.Second):
		t.Fatal("Close did not unblock Read")
	}
	if _, err := p.Write([]byte("x")); !errors.Is(err, ErrClosed) {
		t.Fatalf("write after close: %v", err)
	}
}

func TestConcurrent(t *testing.T) {
	p := NewPort()
	p.OnWrite = func(b []byte) { p.Feed(b) } // echo
	var wg sync.WaitGroup
	for i := 0; i < 4; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for j := 0; j < 100; j++ {
				p.Write([]byte("ab"))
			}
		}()
	}
	got := 0
	b := make([]byte, 64)
	for got < 800 {
		n, err := p.Read(b)
		if err != nil {
			t.Fatal(err)
		}
		got += n
	}
	wg.Wait()
	if len(p.Written()) != 800 || p.Pending() != 0 {
		t.Fatalf("written %d pending %d", len(p.Written()), p.Pending())
	}
	var _ io.Reader = p
}
