package main

import (
	"bytes"
	"context"
	"fmt"
	"net"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// The real cornerbook binary, built once per test run into a temporary
// folder, runs as the hub subprocess in the fault and bad-input tests.

var (
	binOnce sync.Once
	binPath string
	binErr  error
	binDir  string
)

func TestMain(m *testing.M) {
	code := m.Run()
	if binDir != "" {
		os.RemoveAll(binDir)
	}
	os.Exit(code)
}

// cornerbookBin builds ./cmd/cornerbook (go build) and returns its path.
func cornerbookBin(t testing.TB) string {
	t.Helper()
	binOnce.Do(func() {
		goTool, err := exec.LookPath("go")
		if err != nil {
			binErr = fmt.Errorf("the go command is not on PATH: %w", err)
			return
		}
		binDir, binErr = os.MkdirTemp("", "cornerbook-bin-")
		if binErr != nil {
			return
		}
		binPath = filepath.Join(binDir, "cornerbook")
		out, err := exec.Command(goTool, "build", "-o", binPath, "cornerbook/cmd/cornerbook").CombinedOutput()
		if err != nil {
			binErr = fmt.Errorf("go build cornerbook/cmd/cornerbook: %v\n%s", err, out)
		}
	})
	require.NoError(t, binErr)
	return binPath
}

// freePort returns a port on 127.0.0.1 that was free a moment ago.
func freePort(t testing.TB) int {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	defer ln.Close()
	return ln.Addr().(*net.TCPAddr).Port
}

// procHub is `cornerbook serve` as a subprocess on 127.0.0.1, on fixed
// ports and one data folder, so it can be killed and started again.
type procHub struct {
	t         *testing.T
	bin, data string
	https     int
	http      int
	cmd       *exec.Cmd
	out       *syncBuffer
	starts    int
}

func newProcHub(t *testing.T, data string) *procHub {
	h := &procHub{t: t, bin: cornerbookBin(t), data: data, https: freePort(t), http: freePort(t)}
	t.Cleanup(func() {
		if h.cmd != nil {
			h.kill()
		}
	})
	return h
}

// URL is the hub's HTTPS address.
func (h *procHub) URL() string { return "https://127.0.0.1:" + strconv.Itoa(h.https) }

// HTTPURL is the plain-HTTP address (the laptop's own screen).
func (h *procHub) HTTPURL() string { return "http://127.0.0.1:" + strconv.Itoa(h.http) }

// start runs the hub and waits until it answers (at most 15 s); it
// returns how long that took.
func (h *procHub) start() time.Duration {
	h.t.Helper()
	h.out = &syncBuffer{}
	h.cmd = exec.Command(h.bin, "serve", "--data", h.data,
		"--addr", "127.0.0.1:"+strconv.Itoa(h.https), "--http-addr", "127.0.0.1:"+strconv.Itoa(h.http))
	h.cmd.Stdout, h.cmd.Stderr = h.out, h.out
	t0 := time.Now()
	require.NoError(h.t, h.cmd.Start())
	h.starts++
	c := h.client()
	ctx, cancel := context.WithTimeout(context.Background(), 15*time.Second)
	defer cancel()
	for {
		if _, err := c.status(ctx); err == nil {
			return time.Since(t0)
		}
		if ctx.Err() != nil {
			h.t.Fatalf("the hub did not answer within 15 s (start %d):\n%s", h.starts, h.out)
		}
		time.Sleep(5 * time.Millisecond)
	}
}

// client talks to the hub's plain-HTTP port as the laptop (no
// certificate needed there).
func (h *procHub) client() *client {
	u, _ := url.Parse(h.HTTPURL())
	c, err := newClient(u, nil, 4, "")
	require.NoError(h.t, err)
	c.http.Timeout = 2 * time.Second
	return c
}

// kill sends SIGKILL and waits for the process to be gone.
func (h *procHub) kill() {
	h.t.Helper()
	if h.cmd == nil || h.cmd.Process == nil {
		return
	}
	h.cmd.Process.Signal(syscall.SIGKILL)
	h.cmd.Wait()
	h.cmd = nil
}

// stop asks the hub to stop (SIGTERM) and waits.
func (h *procHub) stop() {
	h.t.Helper()
	if h.cmd == nil {
		return
	}
	h.cmd.Process.Signal(syscall.SIGTERM)
	done := make(chan struct{})
	go func() { h.cmd.Wait(); close(done) }()
	select {
	case <-done:
	case <-time.After(10 * time.Second):
		h.cmd.Process.Kill()
		<-done
	}
	h.cmd = nil
}

func (h *procHub) caPEM() []byte {
	b, err := os.ReadFile(filepath.Join(h.data, "tls", "ca.crt"))
	require.NoError(h.t, err)
	return b
}

// syncBuffer is the hub's output, written by exec's copying goroutine and
// read by the test.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}
