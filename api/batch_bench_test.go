package api_test

import (
	"bufio"
	"fmt"
	"io"
	"net/http"
	"net/http/httptest"
	"net/url"
	"runtime"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// streamBatch posts n generated samples as one NDJSON stream (written as
// it is sent, never held whole) to a real server and reads the answer
// line by line; it returns the lines read and the peak heap in use while
// the stream ran, sampled every millisecond.
func streamBatch(t testing.TB, srv *httptest.Server, n int, evaluations string) (lines int, peakHeap uint64) {
	t.Helper()
	runtime.GC()
	var peak atomic.Uint64
	stop := make(chan struct{})
	sampled := make(chan struct{})
	go func() {
		defer close(sampled)
		var ms runtime.MemStats
		tick := time.NewTicker(time.Millisecond)
		defer tick.Stop()
		for {
			runtime.ReadMemStats(&ms)
			if ms.HeapInuse > peak.Load() {
				peak.Store(ms.HeapInuse)
			}
			select {
			case <-stop:
				return
			case <-tick.C:
			}
		}
	}()
	pr, pw := io.Pipe()
	go func() {
		w := bufio.NewWriter(pw)
		for i := range n {
			fmt.Fprintln(w, batchSoy(i))
		}
		w.Flush()
		pw.Close()
	}()
	req, err := http.NewRequest(http.MethodPost, srv.URL+"/v1/batch?evaluations="+url.QueryEscape(evaluations), pr)
	require.NoError(t, err)
	req.Header.Set("Content-Type", "application/x-ndjson")
	resp, err := srv.Client().Do(req)
	require.NoError(t, err)
	defer resp.Body.Close()
	require.Equal(t, http.StatusOK, resp.StatusCode)
	sc := bufio.NewScanner(resp.Body)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	var last string
	for sc.Scan() {
		lines++
		last = sc.Text()
	}
	require.NoError(t, sc.Err())
	close(stop)
	<-sampled
	require.True(t, strings.HasPrefix(last, `{"summary":{"count":`+fmt.Sprint(n)), last)
	return lines, peak.Load()
}

// The heap an NDJSON batch holds does not grow with its length: 10,000
// samples peak within a few MiB of 1,000 (the window of samples in flight
// and the buffers are the same; nothing accumulates).
func TestBatchNDJSONMemoryFlat(t *testing.T) {
	if testing.Short() {
		t.Skip("streams 11,000 samples")
	}
	srv := httptest.NewServer(newApp(t).Echo)
	defer srv.Close()
	lines1k, peak1k := streamBatch(t, srv, 1000, "properties")
	lines10k, peak10k := streamBatch(t, srv, 10000, "properties")
	require.Equal(t, 1001, lines1k)
	require.Equal(t, 10001, lines10k)
	t.Logf("peak heap in use: %.1f MiB for 1,000 samples, %.1f MiB for 10,000", float64(peak1k)/(1<<20), float64(peak10k)/(1<<20))
	require.Less(t, float64(peak10k), 1.5*float64(peak1k)+8<<20, "the heap grew with the stream")
}

// BenchmarkBatchNDJSON streams batches of 1,000 and 10,000 samples
// (properties) and reports bytes allocated per sample, the peak heap and
// samples per second: flat bytes per sample and peak heap between the two
// sizes is the streaming guarantee.
func BenchmarkBatchNDJSON(b *testing.B) {
	srv := httptest.NewServer(newApp(b).Echo)
	defer srv.Close()
	for _, n := range []int{1000, 10000} {
		b.Run(fmt.Sprintf("samples=%d", n), func(b *testing.B) {
			var peak uint64
			var before, after runtime.MemStats
			runtime.ReadMemStats(&before)
			start := time.Now()
			for b.Loop() {
				_, p := streamBatch(b, srv, n, "properties")
				peak = max(peak, p)
			}
			elapsed := time.Since(start)
			runtime.ReadMemStats(&after)
			total := float64(b.N) * float64(n)
			b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/total, "B/sample")
			b.ReportMetric(float64(peak)/(1<<20), "peak-heap-MiB")
			b.ReportMetric(total/elapsed.Seconds(), "samples/s")
		})
	}
}

// BenchmarkBatchJSON100 is a JSON batch of 100 samples (properties), to
// set against BenchmarkPropertiesHTTP, one sample per request.
func BenchmarkBatchJSON100(b *testing.B) {
	app := newApp(b)
	var samples []string
	for i := range 100 {
		samples = append(samples, batchSoy(i))
	}
	body := batchBody(samples, `["properties"]`, `{}`)
	b.ReportAllocs()
	for b.Loop() {
		req := httptest.NewRequest(http.MethodPost, "/v1/batch", strings.NewReader(body))
		req.Header.Set("Content-Type", "application/json")
		rec := httptest.NewRecorder()
		app.Echo.ServeHTTP(rec, req)
		if rec.Code != http.StatusOK {
			b.Fatal(rec.Body.String())
		}
	}
	b.ReportMetric(float64(b.N)*100/b.Elapsed().Seconds(), "samples/s")
}

// BenchmarkSingleRequestsLoopback posts the same 1,000 samples as single
// /v1/properties requests over loopback from four keep-alive connections,
// to set against BenchmarkBatchNDJSON on the same machine.
func BenchmarkSingleRequestsLoopback(b *testing.B) {
	srv := httptest.NewServer(newApp(b).Echo)
	defer srv.Close()
	const n, conns = 1000, 4
	bodies := make([]string, n)
	for i := range bodies {
		s := batchSoy(i)
		bodies[i] = `{"profile":` + s[strings.Index(s, `"profile":`)+len(`"profile":`):len(s)-1] + `}`
	}
	client := srv.Client()
	client.Transport.(*http.Transport).MaxIdleConnsPerHost = conns
	start := time.Now()
	for b.Loop() {
		next := make(chan string)
		done := make(chan struct{})
		for range conns {
			go func() {
				defer func() { done <- struct{}{} }()
				for body := range next {
					resp, err := client.Post(srv.URL+"/v1/properties", "application/json", strings.NewReader(body))
					if err != nil {
						b.Error(err)
						return
					}
					_, _ = io.Copy(io.Discard, resp.Body)
					resp.Body.Close()
					if resp.StatusCode != http.StatusOK {
						b.Errorf("status %d", resp.StatusCode)
					}
				}
			}()
		}
		for _, body := range bodies {
			next <- body
		}
		close(next)
		for range conns {
			<-done
		}
	}
	b.ReportMetric(float64(b.N)*n/time.Since(start).Seconds(), "samples/s")
}
