package main

import (
	"errors"
	"fmt"
	"io"
	"net"
	"os"
	"os/exec"
	"strconv"
	"strings"
	"time"
)

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
	// The in-flight limits are raised above the harness's connections: it
	// measures the cost of answering, not the shedding.
	cmd.Env = append(os.Environ(), "LIPIDSVC_ADDR="+addr, "LIPIDSVC_METRICS_ADDR=off", "GOMAXPROCS=",
		"LIPIDSVC_MAX_INFLIGHT_CHEAP=1000", "LIPIDSVC_MAX_INFLIGHT_MEDIUM=1000", "LIPIDSVC_MAX_INFLIGHT_EXPENSIVE=1000",
		"LIPIDSVC_MAX_BODY_READS=1000")
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
