package service

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// serve runs the whole program (Run) in-process on an ephemeral loopback
// port with the given environment and returns its address and a stop
// function that cancels it (as SIGTERM does) and waits for it to return.
func serve(t *testing.T, env map[string]string) (addr string, stop func() error) {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join("..", "openapi.yaml"))
	require.NoError(t, err)
	base := map[string]string{"LIPIDSVC_ADDR": "127.0.0.1:0", "LIPIDSVC_METRICS_ADDR": "off", "LIPIDSVC_LOG_LEVEL": "warn"}
	for k, v := range env {
		base[k] = v
	}
	pr, pw := io.Pipe()
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() {
		done <- Run(ctx, nil, func(k string) string { return base[k] }, pw, raw)
		pw.Close()
	}()
	found := make(chan string, 1)
	go func() {
		sc := bufio.NewScanner(pr)
		for sc.Scan() {
			var m map[string]any
			if json.Unmarshal(sc.Bytes(), &m) == nil && m["msg"] == "listening" {
				found <- m["addr"].(string)
			}
		}
	}()
	// The log level hides "listening"; find the port from the listener by
	// retrying instead when it does not come.
	select {
	case addr = <-found:
	case <-time.After(5 * time.Second):
		cancel()
		t.Fatal("the server did not report its address")
	}
	return addr, func() error {
		cancel()
		select {
		case err := <-done:
			return err
		case <-time.After(30 * time.Second):
			return errors.New("the server did not stop")
		}
	}
}

const faultBody = `{"profile":{"acids":[{"acid":"16:0","percent":10.5},{"acid":"18:0","percent":4},{"acid":"18:1 c9","percent":23.4},{"acid":"18:2 c9,c12","percent":54.5},{"acid":"18:3 c9,c12,c15","percent":7.6}]}}`

// SIGTERM during sustained load loses no request. The clients stand in
// for a load balancer's pool: they send until they see /readyz turn 503
// (polled every 10 ms, as a fast balancer would) and then send no more.
// Every request sent — including those in flight when the shutdown began
// and those sent during the drain — is answered 200; the answers of the
// drain carry Connection: close.
func TestShutdownUnderLoadLosesNothing(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a loaded server through its shutdown")
	}
	addr, stop := serve(t, map[string]string{"LIPIDSVC_LOG_LEVEL": "info", "LIPIDSVC_DRAIN_DELAY": "500ms", "LIPIDSVC_SHUTDOWN_TIMEOUT": "10s"})
	url := "http://" + addr
	var ok, refused, lost, closing atomic.Int64
	var firstRefusal, readinessDown atomic.Int64
	var routable atomic.Bool
	routable.Store(true)
	var lostErrs sync.Map
	stopLoad := make(chan struct{})
	var wg sync.WaitGroup
	for range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			client := &http.Client{Transport: &http.Transport{MaxIdleConnsPerHost: 1}, Timeout: 10 * time.Second}
			for {
				select {
				case <-stopLoad:
					return
				default:
				}
				if !routable.Load() {
					time.Sleep(time.Millisecond)
					continue
				}
				resp, err := client.Post(url+"/v1/properties", "application/json", strings.NewReader(faultBody))
				if err != nil {
					if isRefused(err) {
						refused.Add(1)
						firstRefusal.CompareAndSwap(0, time.Now().UnixNano())
						time.Sleep(5 * time.Millisecond)
						continue
					}
					lost.Add(1)
					lostErrs.Store(err.Error(), true)
					continue
				}
				_, _ = io.Copy(io.Discard, resp.Body)
				resp.Body.Close()
				if resp.Close {
					closing.Add(1)
				}
				if resp.StatusCode == http.StatusOK {
					ok.Add(1)
				} else {
					lost.Add(1)
					lostErrs.Store(fmt.Sprint("status ", resp.StatusCode), true)
				}
			}
		}()
	}
	go func() {
		for {
			resp, err := http.Get(url + "/readyz")
			if err == nil {
				resp.Body.Close()
				if resp.StatusCode == http.StatusServiceUnavailable {
					readinessDown.CompareAndSwap(0, time.Now().UnixNano())
					routable.Store(false)
					return
				}
			}
			select {
			case <-stopLoad:
				return
			case <-time.After(10 * time.Millisecond):
			}
		}
	}()
	time.Sleep(400 * time.Millisecond)
	stopErr := make(chan error, 1)
	go func() { stopErr <- stop() }()
	require.NoError(t, <-stopErr)
	time.Sleep(50 * time.Millisecond)
	close(stopLoad)
	wg.Wait()
	var msgs []string
	lostErrs.Range(func(k, _ any) bool { msgs = append(msgs, k.(string)); return true })
	t.Logf("answered %d (%d with Connection: close), refused %d, lost %d %v", ok.Load(), closing.Load(), refused.Load(), lost.Load(), msgs)
	require.Greater(t, ok.Load(), int64(100), "the load ran")
	require.Zero(t, lost.Load(), "requests lost: %v", msgs)
	require.Zero(t, refused.Load(), "no client was refused: the pool had moved before the listener closed")
	require.NotZero(t, readinessDown.Load(), "readiness turned 503")
	if f := firstRefusal.Load(); f != 0 {
		require.Less(t, readinessDown.Load(), f, "readiness turned 503 before connections were refused")
	}
}

func isRefused(err error) bool {
	return errors.Is(err, syscall.ECONNREFUSED)
}

// An oversized body gets 413 problem+json that the client can read, even
// while it is still sending: the server answers and closes the connection
// rather than reset it. A client that sends its headers too slowly is cut
// off, and idle connections are closed after the idle timeout.
func TestOversizeSlowAndIdleClients(t *testing.T) {
	addr, stop := serve(t, map[string]string{"LIPIDSVC_LOG_LEVEL": "info", "LIPIDSVC_READ_HEADER_TIMEOUT": "300ms",
		"LIPIDSVC_IDLE_TIMEOUT": "300ms", "LIPIDSVC_DRAIN_DELAY": "0s"})
	defer func() { require.NoError(t, stop()) }()

	// 6 MB declared and sent: 413 at once, readable.
	big := strings.Repeat(" ", 6<<20)
	resp, err := http.Post("http://"+addr+"/v1/properties", "application/json", strings.NewReader(big))
	require.NoError(t, err)
	body, err := io.ReadAll(resp.Body)
	resp.Body.Close()
	require.NoError(t, err)
	require.Equal(t, http.StatusRequestEntityTooLarge, resp.StatusCode)
	require.Contains(t, string(body), "body-too-large")

	// 6 MB without a length (chunked): the limit reader stops it.
	pr, pw := io.Pipe()
	go func() {
		chunk := []byte(strings.Repeat(" ", 64<<10))
		for i := 0; i < 96; i++ {
			if _, err := pw.Write(chunk); err != nil {
				return
			}
		}
		pw.Close()
	}()
	req, _ := http.NewRequest(http.MethodPost, "http://"+addr+"/v1/properties", pr)
	req.Header.Set("Content-Type", "application/json")
	resp, err = http.DefaultClient.Do(req)
	require.NoError(t, err)
	body, _ = io.ReadAll(resp.Body)
	resp.Body.Close()
	require.Equal(t, http.StatusRequestEntityTooLarge, resp.StatusCode, string(body))
	pr.Close()

	// Slow headers: the connection is closed after the header timeout.
	conn, err := net.Dial("tcp", addr)
	require.NoError(t, err)
	_, _ = conn.Write([]byte("POST /v1/properties HTTP/1.1\r\nHost: x\r\n"))
	_ = conn.SetReadDeadline(time.Now().Add(3 * time.Second))
	start := time.Now()
	_, err = conn.Read(make([]byte, 1024))
	conn.Close()
	require.Error(t, err, "the server must close a connection whose headers never end")
	require.Less(t, time.Since(start), 2*time.Second)

	// An idle keep-alive connection is closed after the idle timeout.
	conn, err = net.Dial("tcp", addr)
	require.NoError(t, err)
	_, _ = conn.Write([]byte("GET /healthz HTTP/1.1\r\nHost: x\r\n\r\n"))
	r := bufio.NewReader(conn)
	resp, err = http.ReadResponse(r, nil)
	require.NoError(t, err)
	_, _ = io.Copy(io.Discard, resp.Body)
	resp.Body.Close()
	_ = conn.SetReadDeadline(time.Now().Add(3 * time.Second))
	start = time.Now()
	_, err = r.ReadByte()
	conn.Close()
	require.ErrorIs(t, err, io.EOF, "the idle connection is closed by the server")
	require.Less(t, time.Since(start), 2*time.Second)
}

// rssBytes is the process's resident memory (Linux).
func rssBytes(t *testing.T) int64 {
	raw, err := os.ReadFile("/proc/self/status")
	if err != nil {
		t.Skip("no /proc/self/status")
	}
	for _, line := range strings.Split(string(raw), "\n") {
		if strings.HasPrefix(line, "VmRSS:") {
			var kb int64
			fmt.Sscanf(strings.TrimSpace(strings.TrimPrefix(line, "VmRSS:")), "%d", &kb)
			return kb << 10
		}
	}
	t.Skip("no VmRSS")
	return 0
}

// Memory under a burst: 64 concurrent 1 MB bodies (over the limit) and 64
// concurrent bodies of the largest legitimate size (a 5,000-species TAG
// list, about 0.35 MB, to the melting model) keep the resident memory of
// the whole test process under the deployment's 256 MiB limit; the
// excess is shed with 503 or refused with 413, never a 5xx of another kind.
func TestMemoryUnderBurst(t *testing.T) {
	if testing.Short() {
		t.Skip("a burst of large bodies")
	}
	addr, stop := serve(t, map[string]string{"LIPIDSVC_LOG_LEVEL": "info", "LIPIDSVC_DRAIN_DELAY": "0s"})
	defer func() { require.NoError(t, stop()) }()
	var tags strings.Builder
	tags.WriteString(`{"triacylglycerols":[`)
	acids := []string{"16:0", "18:0", "18:1 c9", "18:2 c9,c12", "14:0", "12:0", "20:0", "16:1 c9", "18:3 c9,c12,c15", "22:0",
		"10:0", "8:0", "24:0", "20:1 c11", "22:1 c13", "17:0", "15:0"}
	n := 0
	for _, a := range acids {
		for _, b := range acids {
			for _, c := range acids {
				if n == 4913 {
					break
				}
				if n > 0 {
					tags.WriteByte(',')
				}
				fmt.Fprintf(&tags, `{"sn1":%q,"sn2":%q,"sn3":%q,"mole_percent":%.10f}`, a, b, c, 100.0/4913)
				n++
			}
		}
	}
	tags.WriteString(`],"temperatures_c":[10,20,30]}`)
	legit := tags.String()
	t.Logf("legitimate body: %d bytes", len(legit))
	huge := `{"profile":{"acids":[` + strings.Repeat(`{"acid":"16:0","percent":0.0001},`, 30000) + `{"acid":"18:1","percent":99}]}}`

	var peak atomic.Int64
	base := rssBytes(t)
	stopSampling := make(chan struct{})
	sampled := make(chan struct{})
	go func() {
		defer close(sampled)
		for {
			if r := rssBytes(t); r > peak.Load() {
				peak.Store(r)
			}
			select {
			case <-stopSampling:
				return
			case <-time.After(2 * time.Millisecond):
			}
		}
	}()
	codes := sync.Map{}
	var wg sync.WaitGroup
	for i := range 128 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			body, path := huge, "/v1/properties"
			if i%2 == 1 {
				body, path = legit, "/v1/melting"
			}
			resp, err := http.Post("http://"+addr+path, "application/json", strings.NewReader(body))
			if err != nil {
				codes.Store("error: "+err.Error(), true)
				return
			}
			_, _ = io.Copy(io.Discard, resp.Body)
			resp.Body.Close()
			v, _ := codes.LoadOrStore(resp.StatusCode, new(atomic.Int64))
			v.(*atomic.Int64).Add(1)
		}()
	}
	wg.Wait()
	close(stopSampling)
	<-sampled
	summary := map[any]int64{}
	codes.Range(func(k, v any) bool {
		if c, ok := v.(*atomic.Int64); ok {
			summary[k] = c.Load()
		} else {
			summary[k] = 1
		}
		return true
	})
	t.Logf("status counts %v; resident memory %d MiB before, %d MiB at the peak", summary, base>>20, peak.Load()>>20)
	for k := range summary {
		code, ok := k.(int)
		require.True(t, ok, "a request failed: %v", k)
		require.Contains(t, []int{200, 413, 503}, code)
	}
	require.Less(t, peak.Load(), int64(256<<20), "resident memory stays under the deployment limit")
}
