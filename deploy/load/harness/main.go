// Command harness measures lipidsvc under load on loopback and states each
// endpoint's cost as a ratio against GET /healthz measured in the same run,
// so that the figures mean the same on a fast or a slow machine.
//
// It builds the service (or takes a built binary), starts it pinned to one
// CPU, pins itself to another, and for each target keeps a fixed number of
// keep-alive connections busy (closed loop) for a fixed time after a
// warm-up. Its HTTP/1.1 client writes pre-built requests and reads answers
// with little work of its own, so the server, not the client, is the
// bottleneck. Per target it reports the achieved throughput, the server's
// CPU time per request (from /proc/PID/schedstat), latency percentiles and
// non-2xx answers, and two ratios against the baseline:
//
//   - capacity: baseline CPU per request / target CPU per request, the share
//     of the baseline's throughput the target reaches on a saturated core;
//   - throughput: achieved requests per second / the baseline's.
//
// Usage, from the repository root:
//
//	go run ./deploy/load/harness                      # healthz and properties, 5 s each
//	go run ./deploy/load/harness -targets all -duration 10s
//	go run ./deploy/load/harness -binary /tmp/old-lipidsvc   # a build of another revision
//
// Only loopback is ever targeted. The harness uses the standard library
// alone, so it adds nothing to the service's dependencies.
package main

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"net"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"
)

func main() {
	if err := run(os.Args[1:], os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "harness:", err)
		os.Exit(1)
	}
}

// target is one request the harness can send.
type target struct {
	name, method, path string
	// body names a file under the repository root; "" for no body.
	body string
}

// targets are the requests the harness knows; the first is the baseline.
var targets = []target{
	{"healthz", "GET", "/healthz", ""},
	{"properties", "POST", "/v1/properties", "testdata/demo/properties-request.json"},
	{"hydrogen_demand", "POST", "/v1/hydrogen-demand", "testdata/load/hydrogen-demand.json"},
	{"forecast", "POST", "/v1/hardening/forecast", "testdata/load/forecast.json"},
	{"melting", "POST", "/v1/melting", "testdata/load/melting.json"},
}

type options struct {
	repo, binary          string
	targets               []target
	duration, warmup      time.Duration
	connections, rounds   int
	serverCPU, loadCPU    int
	pinned                bool
	readyTimeout, timeout time.Duration
}

func parseFlags(args []string) (options, error) {
	fs := flag.NewFlagSet("harness", flag.ContinueOnError)
	var o options
	var names string
	fs.StringVar(&o.repo, "repo", ".", "repository root (for building and for request bodies)")
	fs.StringVar(&o.binary, "binary", "", "a built lipidsvc binary; empty builds the one in -repo")
	fs.StringVar(&names, "targets", "healthz,properties", "comma-separated targets, or all: "+targetNames())
	fs.DurationVar(&o.duration, "duration", 5*time.Second, "measured time per target")
	fs.DurationVar(&o.warmup, "warmup", time.Second, "unmeasured time per target before it")
	fs.IntVar(&o.connections, "connections", 8, "keep-alive connections kept busy")
	fs.IntVar(&o.rounds, "rounds", 3, "rounds over the targets; medians over rounds are reported")
	fs.IntVar(&o.serverCPU, "server-cpu", 0, "CPU the server is pinned to; -1 leaves it unpinned")
	fs.IntVar(&o.loadCPU, "load-cpu", 1, "CPU the harness pins itself to; -1 leaves it unpinned")
	fs.DurationVar(&o.readyTimeout, "ready-timeout", 30*time.Second, "wait for /readyz at most this long")
	fs.DurationVar(&o.timeout, "request-timeout", 10*time.Second, "one request's time limit")
	if err := fs.Parse(args); err != nil {
		return o, err
	}
	if o.duration <= 0 || o.duration > 10*time.Minute {
		return o, errors.New("-duration must be above 0 and at most 10m")
	}
	if o.warmup < 0 || o.connections < 1 || o.connections > 1024 || o.rounds < 1 || o.rounds > 100 {
		return o, errors.New("-warmup must be >= 0, -connections from 1 to 1024 and -rounds from 1 to 100")
	}
	sel := map[string]bool{}
	for _, n := range strings.Split(names, ",") {
		sel[strings.TrimSpace(n)] = true
	}
	for i, t := range targets {
		// The baseline always runs first: every ratio needs it.
		if i == 0 || sel["all"] || sel[t.name] {
			o.targets = append(o.targets, t)
			delete(sel, t.name)
		}
	}
	delete(sel, "all")
	for n := range sel {
		return o, fmt.Errorf("unknown target %q (known: %s)", n, targetNames())
	}
	return o, nil
}

func targetNames() string {
	var out []string
	for _, t := range targets {
		out = append(out, t.name)
	}
	return strings.Join(out, ", ")
}

func run(args []string, stdout io.Writer) error {
	o, err := parseFlags(args)
	if err != nil {
		return err
	}
	if o.loadCPU >= 0 && os.Getenv("HARNESS_PINNED") == "" {
		// Pin the whole process (every thread of the Go runtime) by
		// starting again under taskset.
		return reexecPinned(o.loadCPU, args)
	}
	bin := o.binary
	if bin == "" {
		dir, err := os.MkdirTemp("", "lipidsvc-harness")
		if err != nil {
			return err
		}
		defer os.RemoveAll(dir)
		bin = filepath.Join(dir, "lipidsvc")
		build := exec.Command("go", "build", "-trimpath", "-o", bin, ".")
		build.Dir, build.Stdout, build.Stderr = o.repo, os.Stderr, os.Stderr
		if err := build.Run(); err != nil {
			return fmt.Errorf("building the service: %w", err)
		}
	}
	srv, err := startServer(bin, o)
	if err != nil {
		return err
	}
	defer srv.stop()

	fmt.Fprintf(stdout, "server pid %d on %s (CPU %s), harness CPU %s, %d connections, %d rounds of %s per target after %s warm-up, %s\n",
		srv.cmd.Process.Pid, srv.addr, cpuName(o.serverCPU), cpuName(o.loadCPU), o.connections, o.rounds, o.duration, o.warmup, runtime.Version())
	reqs := make([][]byte, len(o.targets))
	for i, t := range o.targets {
		if reqs[i], err = buildRequest(o.repo, srv.addr, t); err != nil {
			return err
		}
	}
	// rounds[k][i] is target i in round k; the targets alternate so that a
	// drift of the machine's speed touches the baseline and the others alike.
	rounds := make([][]result, o.rounds)
	for k := range rounds {
		for i, t := range o.targets {
			r, err := measure(srv, t, reqs[i], o)
			if err != nil {
				return fmt.Errorf("%s: %w", t.name, err)
			}
			rounds[k] = append(rounds[k], r)
		}
	}
	printTable(stdout, rounds)
	return nil
}

func cpuName(c int) string {
	if c < 0 {
		return "any"
	}
	return strconv.Itoa(c)
}

func reexecPinned(cpu int, args []string) error {
	self, err := os.Executable()
	if err != nil {
		return err
	}
	cmd := exec.Command("taskset", append([]string{"-c", strconv.Itoa(cpu), self}, args...)...)
	cmd.Env = append(os.Environ(), "HARNESS_PINNED=1")
	cmd.Stdin, cmd.Stdout, cmd.Stderr = os.Stdin, os.Stdout, os.Stderr
	if err := cmd.Run(); err != nil {
		var ee *exec.ExitError
		if errors.As(err, &ee) {
			os.Exit(ee.ExitCode())
		}
		return fmt.Errorf("taskset (util-linux) is needed to pin CPUs, or pass -load-cpu -1: %w", err)
	}
	return nil
}

type server struct {
	cmd  *exec.Cmd
	addr string
	done chan error
}

func freeLoopbackAddr() (string, error) {
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		return "", err
	}
	defer ln.Close()
	return ln.Addr().String(), nil
}

func startServer(bin string, o options) (*server, error) {
	addr, err := freeLoopbackAddr()
	if err != nil {
		return nil, err
	}
	name, args := bin, []string(nil)
	if o.serverCPU >= 0 {
		name, args = "taskset", []string{"-c", strconv.Itoa(o.serverCPU), bin}
	}
	cmd := exec.Command(name, args...)
	// The service's defaults, logging included (one line per request at
	// info): the figures are those of a production configuration.
	cmd.Env = append(os.Environ(), "LIPIDSVC_ADDR="+addr, "LIPIDSVC_METRICS_ADDR=off", "GOMAXPROCS=")
	cmd.Stdout, cmd.Stderr = io.Discard, os.Stderr
	if err := cmd.Start(); err != nil {
		return nil, err
	}
	s := &server{cmd: cmd, addr: addr, done: make(chan error, 1)}
	go func() { s.done <- cmd.Wait() }()
	deadline := time.Now().Add(o.readyTimeout)
	for {
		if status, _ := getStatus(addr, "/readyz"); status == 200 {
			return s, nil
		}
		select {
		case err := <-s.done:
			return nil, fmt.Errorf("the server exited during start-up: %v", err)
		case <-time.After(100 * time.Millisecond):
		}
		if time.Now().After(deadline) {
			s.stop()
			return nil, fmt.Errorf("the server was not ready after %s", o.readyTimeout)
		}
	}
}

func (s *server) stop() {
	_ = s.cmd.Process.Signal(os.Interrupt)
	select {
	case <-s.done:
	case <-time.After(30 * time.Second):
		_ = s.cmd.Process.Kill()
		<-s.done
	}
}

// cpuTime is the server's CPU time so far: the sum over its threads of
// /proc/PID/task/TID/schedstat's first field (ns on a CPU). With taskset
// as a wrapper the service is its child, found by its command line.
func (s *server) cpuTime() (time.Duration, error) {
	pid := s.cmd.Process.Pid
	if kids, err := os.ReadFile(fmt.Sprintf("/proc/%d/task/%d/children", pid, pid)); err == nil {
		if f := strings.Fields(string(kids)); len(f) == 1 {
			pid, _ = strconv.Atoi(f[0])
		}
	}
	tasks, err := os.ReadDir(fmt.Sprintf("/proc/%d/task", pid))
	if err != nil {
		return 0, err
	}
	var total int64
	for _, t := range tasks {
		b, err := os.ReadFile(fmt.Sprintf("/proc/%d/task/%s/schedstat", pid, t.Name()))
		if err != nil {
			continue // the thread ended
		}
		f := strings.Fields(string(b))
		if len(f) == 0 {
			continue
		}
		ns, err := strconv.ParseInt(f[0], 10, 64)
		if err != nil {
			return 0, err
		}
		total += ns
	}
	return time.Duration(total), nil
}

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

type result struct {
	name           string
	requests       int
	non2xx         int
	elapsed        time.Duration
	cpu            time.Duration
	p50, p99, p999 time.Duration
}

func (r result) perSecond() float64 { return float64(r.requests) / r.elapsed.Seconds() }
func (r result) cpuPerRequest() time.Duration {
	if r.requests == 0 {
		return 0
	}
	return r.cpu / time.Duration(r.requests)
}

// measure runs one target: warm-up, then the measured phase.
func measure(s *server, t target, req []byte, o options) (result, error) {
	if status, err := oneRequest(s.addr, req); err != nil || status/100 != 2 {
		return result{}, fmt.Errorf("a first request answered %d (%v); check the body", status, err)
	}
	if o.warmup > 0 {
		if _, err := load(s.addr, req, o.connections, o.warmup, o.timeout, false); err != nil {
			return result{}, err
		}
	}
	cpu0, err := s.cpuTime()
	if err != nil {
		return result{}, err
	}
	start := time.Now()
	lat, err := load(s.addr, req, o.connections, o.duration, o.timeout, true)
	if err != nil {
		return result{}, err
	}
	elapsed := time.Since(start)
	cpu1, err := s.cpuTime()
	if err != nil {
		return result{}, err
	}
	r := result{name: t.name, elapsed: elapsed, cpu: cpu1 - cpu0, requests: len(lat.d), non2xx: lat.non2xx}
	slices.Sort(lat.d)
	r.p50, r.p99, r.p999 = quantile(lat.d, 0.5), quantile(lat.d, 0.99), quantile(lat.d, 0.999)
	return r, nil
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

// printTable prints, per target, the medians over rounds; each ratio is
// taken within its round (against that round's baseline) first.
func printTable(w io.Writer, rounds [][]result) {
	fmt.Fprintf(w, "\n%-16s %10s %13s %9s %11s %9s %9s %9s %8s\n",
		"target", "req/s", "server µs/req", "capacity", "throughput", "p50 ms", "p99 ms", "p99.9 ms", "non-2xx")
	for i := range rounds[0] {
		var rps, cpu, capacity, through, p50, p99, p999 []float64
		non2xx := 0
		for _, round := range rounds {
			r, base := round[i], round[0]
			rps = append(rps, r.perSecond())
			cpu = append(cpu, float64(r.cpuPerRequest())/1e3)
			capacity = append(capacity, float64(base.cpuPerRequest())/float64(r.cpuPerRequest()))
			through = append(through, r.perSecond()/base.perSecond())
			p50, p99, p999 = append(p50, ms(r.p50)), append(p99, ms(r.p99)), append(p999, ms(r.p999))
			non2xx += r.non2xx
		}
		fmt.Fprintf(w, "%-16s %10.0f %13.1f %9.3f %11.3f %9.2f %9.2f %9.2f %8d\n", rounds[0][i].name,
			median(rps), median(cpu), median(capacity), median(through), median(p50), median(p99), median(p999), non2xx)
	}
	base := rounds[0][0].name
	fmt.Fprintf(w, "\nmedians over %d rounds; capacity = %s server CPU per request / the target's, "+
		"throughput = the target's req/s / %s req/s, each within its round\n", len(rounds), base, base)
	if len(rounds) > 1 {
		fmt.Fprintf(w, "capacity by round:")
		for i := range rounds[0] {
			fmt.Fprintf(w, " %s", rounds[0][i].name)
			for _, round := range rounds {
				fmt.Fprintf(w, " %.3f", float64(round[0].cpuPerRequest())/float64(round[i].cpuPerRequest()))
			}
			fmt.Fprintf(w, ";")
		}
		fmt.Fprintln(w)
	}
}

func median(v []float64) float64 {
	s := slices.Clone(v)
	slices.Sort(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

func ms(d time.Duration) float64 { return float64(d) / 1e6 }
