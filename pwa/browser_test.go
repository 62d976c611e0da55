package pwa_test

import (
	"bytes"
	"context"
	"encoding/json"
	"net"
	"net/http"
	"os"
	"strings"
	"sync"
	"testing"
	"time"

	"cornerbook/pwa"
	"cornerbook/pwa/pwatest"

	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/chromedp"

	"github.com/stretchr/testify/require"
)

// appServer serves only the app (no hub API) on a fixed loopback port that
// can go down and come back on the same origin.
type appServer struct {
	addr string
	mu   sync.Mutex
	srv  *http.Server
	hits int
}

func newAppServer(t *testing.T) *appServer {
	s := &appServer{}
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	s.addr = ln.Addr().String()
	s.serve(ln)
	t.Cleanup(s.down)
	return s
}

func (s *appServer) URL(p string) string { return "http://" + s.addr + p }

func (s *appServer) serve(ln net.Listener) {
	h := pwa.Handler()
	srv := &http.Server{Handler: http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		s.mu.Lock()
		s.hits++
		s.mu.Unlock()
		h.ServeHTTP(w, r)
	})}
	s.mu.Lock()
	s.srv = srv
	s.mu.Unlock()
	go srv.Serve(ln)
}

func (s *appServer) down() {
	s.mu.Lock()
	srv := s.srv
	s.srv = nil
	s.mu.Unlock()
	if srv != nil {
		srv.Close()
	}
}

type logBuf struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *logBuf) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *logBuf) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

func start(t *testing.T, dir string) (*pwatest.Browser, context.Context, *logBuf) {
	log := &logBuf{}
	t0 := time.Now()
	b := pwatest.Start(t, pwatest.Options{UserDataDir: dir, Log: log})
	t.Logf("browser started in %s", time.Since(t0))
	t.Cleanup(func() {
		if t.Failed() || os.Getenv("PWA_LOG") != "" {
			t.Logf("browser log:\n%s", log.String())
		}
	})
	ctx, cancel := context.WithTimeout(b.Ctx(), 120*time.Second)
	t.Cleanup(cancel)
	return b, ctx, log
}

func TestAppRendersEveryScreen(t *testing.T) {
	s := newAppServer(t)
	_, ctx, log := start(t, "")
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	for _, p := range pwa.Routes {
		require.NoError(t, pwatest.Route(ctx, p), p)
		var ok bool
		require.NoError(t, pwatest.Eval(ctx, `!!document.querySelector('#screen > *')`, &ok))
		require.True(t, ok, p)
	}
	require.NotContains(t, log.String(), "exception", "no uncaught exception")
	_ = json.Valid
	_ = strings.Contains
}

// seed stores records as if pulled from a hub, through the app's own merge.
func seed(t *testing.T, ctx context.Context, recs ...map[string]any) {
	b, err := json.Marshal(recs)
	require.NoError(t, err)
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.applyPage({ records: `+string(b)+`, next: 0 })).then(() => true)`, nil))
}

func athlete(id, name, units string) map[string]any {
	return map[string]any{"id": id, "kind": "athlete", "athlete": id, "at": "2026-11-01T08:00:00+00:00", "device": "hub", "stamp": map[string]any{"l": 1, "c": 0}, "body": map[string]any{"name": name, "units": units}}
}

const (
	idAna  = "01890000-0000-7000-8000-00000000000a"
	idBeto = "01890000-0000-7000-8000-00000000000b"
)

func TestScreenshot(t *testing.T) {
	if os.Getenv("PWA_SHOT") == "" {
		t.Skip("set PWA_SHOT=dir to write screenshots")
	}
	s := newAppServer(t)
	_, ctx, _ := start(t, "")
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	seed(t, ctx, athlete(idAna, "Ana Pereira", "kg"), athlete(idBeto, "Beto Lindqvist", "lb"))
	if os.Getenv("PWA_DARK") != "" {
		_, err := chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Features: []*emulation.MediaFeature{{Name: "prefers-color-scheme", Value: "dark"}}})
		require.NoError(t, err)
	}
	for _, p := range []string{"/", "/checkin", "/jumps", "/rounds", "/session", "/intervals", "/incident", "/today", "/settings"} {
		require.NoError(t, pwatest.Route(ctx, p))
		time.Sleep(300 * time.Millisecond)
		png, err := chromedp.Run(ctx, chromedp.FullScreenshot(100))
		require.NoError(t, err)
		os.WriteFile(os.Getenv("PWA_SHOT")+"/"+strings.Trim(strings.ReplaceAll(p, "/", "_"), "_")+"x.png", png, 0o644)
	}
}
