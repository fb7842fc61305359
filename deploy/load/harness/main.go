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
	"debug/buildinfo"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
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
	{"conformity", "POST", "/v1/conformity", "testdata/demo/conformity-request.json"},
	{"blend", "POST", "/v1/blends", "testdata/demo/blend-request.json"},
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
		// The service is measured as it ships: built with the toolchain
		// go.mod pins (fetched through the module proxy when it is not
		// the local one), whatever GOTOOLCHAIN says here.
		tc, err := pinnedToolchain(filepath.Join(o.repo, "go.mod"))
		if err != nil {
			return err
		}
		build.Env = os.Environ()
		if tc != "" {
			build.Env = append(build.Env, "GOTOOLCHAIN="+tc)
		}
		if err := build.Run(); err != nil {
			return fmt.Errorf("building the service: %w", err)
		}
	}
	serverGo := "unknown Go"
	if info, err := buildinfo.ReadFile(bin); err == nil {
		serverGo = info.GoVersion
	}
	srv, err := startServer(bin, o)
	if err != nil {
		return err
	}
	defer srv.stop()

	fmt.Fprintf(stdout, "server pid %d on %s (CPU %s, built with %s), harness CPU %s (%s), %d connections, %d rounds of %s per target after %s warm-up\n",
		srv.cmd.Process.Pid, srv.addr, cpuName(o.serverCPU), serverGo, cpuName(o.loadCPU), runtime.Version(), o.connections, o.rounds, o.duration, o.warmup)
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

// pinnedToolchain returns the toolchain line of the go.mod at path ("" when
// there is none).
func pinnedToolchain(path string) (string, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return "", fmt.Errorf("reading the toolchain line: %w", err)
	}
	for _, line := range strings.Split(string(b), "\n") {
		if f := strings.Fields(line); len(f) == 2 && f[0] == "toolchain" {
			return f[1], nil
		}
	}
	return "", nil
}
