package main

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"fmt"
	"net"
	"os"
	"path/filepath"
	"strconv"
	"sync"
	"sync/atomic"
	"time"
)

func getStatus(addr, path string) (int, error) {
	c, err := net.DialTimeout("tcp", addr, time.Second)
	if err != nil {
		return 0, err
	}
	defer c.Close()
	_ = c.SetDeadline(time.Now().Add(2 * time.Second))
	cc := &conn{c: c, r: bufio.NewReader(c)}
	return cc.do([]byte("GET " + path + " HTTP/1.1\r\nHost: " + addr + "\r\nConnection: close\r\n\r\n"))
}

func buildRequest(repo, addr string, t target) ([]byte, error) {
	var body []byte
	if t.body != "" {
		var err error
		if body, err = os.ReadFile(filepath.Join(repo, t.body)); err != nil {
			return nil, err
		}
	}
	var b bytes.Buffer
	fmt.Fprintf(&b, "%s %s HTTP/1.1\r\nHost: %s\r\nUser-Agent: lipidsvc-harness\r\n", t.method, t.path, addr)
	if body != nil {
		fmt.Fprintf(&b, "Content-Type: application/json\r\nContent-Length: %d\r\n", len(body))
	}
	b.WriteString("\r\n")
	b.Write(body)
	return b.Bytes(), nil
}

// conn is one keep-alive connection of the lean client.
type conn struct {
	c net.Conn
	r *bufio.Reader
}

// do writes one request and reads the whole answer, returning its status.
func (c *conn) do(req []byte) (int, error) {
	if _, err := c.c.Write(req); err != nil {
		return 0, err
	}
	line, err := c.r.ReadSlice('\n')
	if err != nil {
		return 0, err
	}
	if len(line) < 12 || !bytes.HasPrefix(line, []byte("HTTP/1.1 ")) {
		return 0, fmt.Errorf("bad status line %q", line)
	}
	status, err := strconv.Atoi(string(line[9:12]))
	if err != nil {
		return 0, err
	}
	length, chunked := -1, false
	for {
		h, err := c.r.ReadSlice('\n')
		if err != nil {
			return 0, err
		}
		if len(h) <= 2 {
			break
		}
		if len(h) > 16 && bytes.EqualFold(h[:15], []byte("Content-Length:")) {
			length, err = strconv.Atoi(string(bytes.TrimSpace(h[15:])))
			if err != nil {
				return 0, err
			}
		}
		if len(h) > 19 && bytes.EqualFold(h[:18], []byte("Transfer-Encoding:")) {
			chunked = bytes.Contains(bytes.ToLower(h[18:]), []byte("chunked"))
		}
	}
	if chunked {
		return status, c.discardChunks()
	}
	if length < 0 {
		return 0, errors.New("answer without Content-Length or chunked encoding")
	}
	if _, err := c.r.Discard(length); err != nil {
		return 0, err
	}
	return status, nil
}

// discardChunks reads a chunked body (RFC 9112 §7.1) to its end.
func (c *conn) discardChunks() error {
	for {
		line, err := c.r.ReadSlice('\n')
		if err != nil {
			return err
		}
		size := bytes.TrimSpace(line)
		if i := bytes.IndexByte(size, ';'); i >= 0 {
			size = size[:i]
		}
		n, err := strconv.ParseInt(string(size), 16, 64)
		if err != nil {
			return fmt.Errorf("bad chunk size %q", line)
		}
		if n == 0 {
			// Trailers, then the empty line.
			for {
				t, err := c.r.ReadSlice('\n')
				if err != nil {
					return err
				}
				if len(t) <= 2 {
					return nil
				}
			}
		}
		if _, err := c.r.Discard(int(n) + 2); err != nil {
			return err
		}
	}
}

func oneRequest(addr string, req []byte) (int, error) {
	c, err := net.DialTimeout("tcp", addr, time.Second)
	if err != nil {
		return 0, err
	}
	defer c.Close()
	_ = c.SetDeadline(time.Now().Add(10 * time.Second))
	return (&conn{c: c, r: bufio.NewReaderSize(c, 64<<10)}).do(req)
}

type latencies struct {
	d      []time.Duration
	non2xx int
}

// load keeps n connections busy for d and gathers each answer's latency.
func load(addr string, req []byte, n int, d, timeout time.Duration, keep bool) (latencies, error) {
	ctx, cancel := context.WithTimeout(context.Background(), d)
	defer cancel()
	var (
		mu       sync.Mutex
		all      latencies
		firstErr atomic.Value
		wg       sync.WaitGroup
	)
	for i := 0; i < n; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var local latencies
			defer func() {
				if keep {
					mu.Lock()
					all.d = append(all.d, local.d...)
					all.non2xx += local.non2xx
					mu.Unlock()
				}
			}()
			nc, err := net.DialTimeout("tcp", addr, time.Second)
			if err != nil {
				firstErr.CompareAndSwap(nil, err)
				return
			}
			defer nc.Close()
			c := &conn{c: nc, r: bufio.NewReaderSize(nc, 64<<10)}
			for ctx.Err() == nil {
				_ = nc.SetDeadline(time.Now().Add(timeout))
				t0 := time.Now()
				status, err := c.do(req)
				if err != nil {
					firstErr.CompareAndSwap(nil, err)
					return
				}
				if keep {
					local.d = append(local.d, time.Since(t0))
					if status/100 != 2 {
						local.non2xx++
					}
				}
			}
		}()
	}
	wg.Wait()
	if err, _ := firstErr.Load().(error); err != nil {
		return all, err
	}
	return all, nil
}

func quantile(sorted []time.Duration, q float64) time.Duration {
	if len(sorted) == 0 {
		return 0
	}
	i := int(q * float64(len(sorted)-1))
	return sorted[i]
}
