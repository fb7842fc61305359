package main

import (
	"bufio"
	"encoding/json"
	"io"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"syscall"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// TestEndToEnd builds and runs the real program on loopback with ephemeral
// ports, posts the demo request, reads the request counter from the metrics
// port, then sends SIGTERM and checks the graceful stop: readiness turns 503
// while the server drains, and the process exits 0.
func TestEndToEnd(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the binary")
	}
	bin := filepath.Join(t.TempDir(), "lipidsvc")
	goBin, err := exec.LookPath("go")
	if err != nil {
		goBin = filepath.Join(runtime.GOROOT(), "bin", "go")
	}
	build := exec.Command(goBin, "build", "-o", bin, ".")
	out, err := build.CombinedOutput()
	require.NoError(t, err, string(out))

	cmd := exec.Command(bin)
	cmd.Env = append(os.Environ(),
		"LIPIDSVC_ADDR=127.0.0.1:0",
		"LIPIDSVC_METRICS_ADDR=127.0.0.1:0",
		"LIPIDSVC_DRAIN_DELAY=1s",
		"LIPIDSVC_REQUEST_TIMEOUT=5s",
		"LIPIDSVC_SHUTDOWN_TIMEOUT=5s",
	)
	stdout, err := cmd.StdoutPipe()
	require.NoError(t, err)
	require.NoError(t, cmd.Start())
	t.Cleanup(func() { _ = cmd.Process.Kill() })

	lines := make(chan map[string]any, 64)
	go func() {
		sc := bufio.NewScanner(stdout)
		for sc.Scan() {
			var m map[string]any
			if json.Unmarshal(sc.Bytes(), &m) == nil {
				lines <- m
			}
		}
		close(lines)
	}()
	waitFor := func(msg string) map[string]any {
		t.Helper()
		timeout := time.After(20 * time.Second)
		for {
			select {
			case m, ok := <-lines:
				require.True(t, ok, "program exited before logging %q", msg)
				if m["msg"] == msg {
					return m
				}
			case <-timeout:
				t.Fatalf("no %q log line", msg)
			}
		}
	}
	listening := waitFor("listening")
	apiURL := "http://" + listening["addr"].(string)
	metricsURL := "http://" + listening["metrics_addr"].(string)

	demo, err := os.Open(filepath.Join("testdata", "demo", "properties-request.json"))
	require.NoError(t, err)
	defer demo.Close()
	resp, err := http.Post(apiURL+"/v1/properties", "application/json", demo)
	require.NoError(t, err)
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	require.Equal(t, http.StatusOK, resp.StatusCode, string(body))
	var props struct {
		IodineValue float64 `json:"iodine_value"`
	}
	require.NoError(t, json.Unmarshal(body, &props))
	require.Greater(t, props.IodineValue, 100.0)

	resp, err = http.Get(metricsURL + "/metrics")
	require.NoError(t, err)
	metrics, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	counter := regexp.MustCompile(`(?m)^lipidsvc_http_requests_total\{code="200",method="POST",route="/v1/properties"\} 1$`)
	require.Regexp(t, counter, string(metrics))
	require.Contains(t, string(metrics), "go_goroutines")

	require.NoError(t, cmd.Process.Signal(syscall.SIGTERM))
	waitFor("draining")
	resp, err = http.Get(apiURL + "/readyz")
	require.NoError(t, err, "the server keeps answering while it drains")
	resp.Body.Close()
	require.Equal(t, http.StatusServiceUnavailable, resp.StatusCode)
	waitFor("stopped")
	for range lines { // let the reader reach EOF before Wait closes the pipe
	}
	require.NoError(t, cmd.Wait())
	require.Equal(t, 0, cmd.ProcessState.ExitCode())
	_, err = http.Get(apiURL + "/healthz")
	require.Error(t, err, "nothing listens after the stop")
}
