// Package server is the hub's HTTP face: the push/pull sync endpoints (the
// only write path), the websocket that pokes devices and dashboards, the
// day's flags, and the app itself. Handlers return errors; one adapter
// turns them into JSON answers (errors.go).
package server

import (
	"context"
	"crypto/tls"
	"errors"
	"fmt"
	"log"
	"net"
	"net/http"
	"sync"
	"sync/atomic"
	"time"

	"github.com/gorilla/mux"

	"cornerbook/pwa"
	"cornerbook/server/auth"
	"cornerbook/server/certs"
	"cornerbook/server/compression"
	"cornerbook/server/records"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// Defaults for Config.
const (
	DefaultShutdownTimeout = 3 * time.Second
	DefaultLockTimeout     = time.Second
)

// Config holds what the hub needs. The zero value of each optional field
// means the default noted beside it.
type Config struct {
	Store *storage.DB      // required: the open data folder
	Now   func() time.Time // hub clock; nil means time.Now
	Log   *log.Logger      // nil means the standard logger
	Name  string           // hub name shown on screens; "" means "Cornerbook hub"
	// Location is the camp's time zone for "the day" when a setting does
	// not say otherwise; nil means the machine's local zone.
	Location *time.Location
	// Auth holds the passphrase, join codes and paired devices. Nil means
	// an open hub where every caller is the coach: for tests of the sync
	// path only; the command line always sets it.
	Auth *auth.Store
	// Certs is the camp authority and the LAN certificate; nil means the
	// hub serves plain HTTP only (loopback tests).
	Certs *certs.Bundle
	// JoinURL is the plain-HTTP join page phones open first; "" when
	// phones cannot reach the hub (it listens on loopback only).
	JoinURL string
	// AppURL is the HTTPS address devices open (shown in QR codes).
	AppURL string
	// DataDir is where daily snapshots go; "" disables them.
	DataDir string
	// BodyTimeout bounds reading the body of every request but a push
	// (join, sign-in, set-up, plan checks: a few KiB), so a device that
	// opens requests and trickles their bodies cannot hold connections;
	// default 10 s. ReadTimeout bounds reading any whole request, the
	// largest push on a weak Wi-Fi included; default 2 minutes.
	BodyTimeout time.Duration
	ReadTimeout time.Duration
}

// Server is one running hub.
type Server struct {
	cfg    Config
	store  *storage.DB
	hub    *pokeHub
	http   *http.Server
	ln     net.Listener
	boot   *http.Server // plain-HTTP bootstrap port, when serving HTTPS
	bootLn net.Listener
	flags  *flagService

	clockMu sync.Mutex // guards clock
	clock   devsync.Clock

	down atomic.Bool // test kill switch: drop every connection

	stop     chan struct{} // closed by Close: background loops end
	stopOnce sync.Once

	reportMu sync.Mutex // guards reported
	reported map[string]syncReport
}

// OpenStore opens (or creates) the data folder's database with the
// record validation and derived fields of server/records.
func OpenStore(path string, now func() time.Time) (*storage.DB, error) {
	if now == nil {
		now = time.Now
	}
	return storage.Open(path, storage.Options{
		Timeout:       DefaultLockTimeout,
		Now:           now,
		Prepare:       func(r *devsync.Record) error { return records.PrepareAt(now())(r) },
		CampIntegrity: true,
		Related:       related,
	})
}

// New builds a hub around an open store. It does not listen yet.
func New(cfg Config) (*Server, error) {
	if cfg.Store == nil {
		return nil, errors.New("server: Config.Store is required")
	}
	if cfg.Now == nil {
		cfg.Now = time.Now
	}
	if cfg.Log == nil {
		cfg.Log = log.Default()
	}
	if cfg.Name == "" {
		cfg.Name = "Cornerbook hub"
	}
	if cfg.Location == nil {
		cfg.Location = time.Local
	}
	if cfg.BodyTimeout <= 0 {
		cfg.BodyTimeout = 10 * time.Second
	}
	if cfg.ReadTimeout <= 0 {
		cfg.ReadTimeout = 2 * time.Minute
	}
	s := &Server{cfg: cfg, store: cfg.Store, hub: newPokeHub()}
	seq, err := s.store.MaxSeq()
	if err != nil {
		return nil, err
	}
	s.hub.seq.Store(seq)
	s.clock.Restore(devsync.HLC{L: s.now().UnixMilli()})
	s.flags = newFlagService(s)
	pwa.Prepare() // the app's files are built while the hub starts answering
	s.stop = make(chan struct{})
	s.flags.work.Add(1)
	go func() {
		defer s.flags.work.Done()
		s.flags.run(s.stop)
	}()
	return s, nil
}

func (s *Server) now() time.Time { return s.cfg.Now() }

func (s *Server) logf(format string, args ...any) { s.cfg.Log.Printf(format, args...) }

// Handler is the hub's whole HTTP surface.
func (s *Server) Handler() http.Handler {
	r := mux.NewRouter()
	api := r.PathPrefix("/api").Subrouter()
	api.HandleFunc("/push", s.serve(s.handlePush)).Methods(http.MethodPost)
	api.HandleFunc("/pull", s.serve(s.handlePull)).Methods(http.MethodGet)
	api.HandleFunc("/ws", s.serve(s.handleWS)).Methods(http.MethodGet)
	api.HandleFunc("/status", s.serve(s.handleStatus)).Methods(http.MethodGet)
	api.HandleFunc("/flags", s.serve(s.handleFlags)).Methods(http.MethodGet)
	api.HandleFunc("/records/{id}/history", s.serve(s.handleHistory)).Methods(http.MethodGet)
	s.routeAccounts(api)
	s.routeAthletes(api)
	s.routeTests(api)
	s.routeCamps(api)
	s.routeGlance(api)
	s.routeFightWeek(api)
	api.PathPrefix("/").HandlerFunc(s.serve(func(w http.ResponseWriter, r *http.Request) error {
		return userError(CodeNotFound, "", fmt.Sprintf("no such API route: %s %s", r.Method, r.URL.Path))
	}))
	r.PathPrefix("/").Handler(pwa.Handler())
	return s.killSwitch(s.bodyDeadline(auth.SecurityHeaders(compression.Middleware(r))))
}

// bodyDeadline gives every request with a body, except a push, BodyTimeout
// to deliver it (on the listeners the hub serves itself).
func (s *Server) bodyDeadline(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.Body != nil && r.Body != http.NoBody && r.URL.Path != "/api/push" {
			// Not every ResponseWriter supports deadlines (httptest's
			// recorder): then ReadTimeout alone applies.
			_ = http.NewResponseController(w).SetReadDeadline(time.Now().Add(s.cfg.BodyTimeout))
		}
		next.ServeHTTP(w, r)
	})
}

// killSwitch drops connections while the hub is marked down, so tests see
// a real network failure without closing the listener (same port, same
// origin).
func (s *Server) killSwitch(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if s.down.Load() {
			if hj, ok := w.(http.Hijacker); ok {
				if c, _, err := hj.Hijack(); err == nil {
					c.Close()
					return
				}
			}
			// HTTP/2 has no connection to hand over: reset the stream,
			// which the client sees as a network error too.
			panic(http.ErrAbortHandler)
		}
		next.ServeHTTP(w, r)
	})
}

// SetDown makes the hub unreachable (true) or reachable again (false).
// For tests of offline behaviour.
func (s *Server) SetDown(down bool) {
	s.down.Store(down)
	if down {
		s.hub.CloseAll(false)
	}
}

// Open listens on addr synchronously (so listen errors surface) and serves
// in a goroutine.
func (s *Server) Open(addr string) error {
	ln, err := net.Listen("tcp", addr)
	if err != nil {
		return fmt.Errorf("listen on %s: %w", addr, err)
	}
	return s.Serve(ln)
}

// Serve serves the app on an existing listener in a goroutine. With
// Config.Certs set, the listener is wrapped in TLS with the camp's LAN
// certificate.
func (s *Server) Serve(ln net.Listener) error {
	if s.cfg.Certs != nil {
		// Offer HTTP/2 in the handshake (ALPN): a phone then opens one
		// connection for the page, its files and every sync request.
		// http.Server only adds "h2" itself in ServeTLS, not for a
		// listener wrapped here, which is why HTTP/1.1 was all a browser
		// could agree before. Websockets stay on HTTP/1.1: Extended
		// CONNECT is off by default (REFERENCES.md §0).
		cfg := s.cfg.Certs.TLSConfig()
		cfg.NextProtos = []string{"h2", "http/1.1"}
		ln = tls.NewListener(ln, cfg)
	}
	s.ln = ln
	s.http = s.httpServer(s.Handler())
	go s.run(s.http, ln)
	return nil
}

// ServeBootstrap serves the plain-HTTP port (BootstrapHandler) on ln.
func (s *Server) ServeBootstrap(ln net.Listener) error {
	if s.cfg.Certs == nil {
		return errors.New("server: the bootstrap port needs Config.Certs")
	}
	s.bootLn = ln
	s.boot = s.httpServer(s.BootstrapHandler(s.Handler()))
	go s.run(s.boot, ln)
	return nil
}

func (s *Server) httpServer(h http.Handler) *http.Server {
	return &http.Server{
		Handler:           h,
		ReadHeaderTimeout: 10 * time.Second,
		ReadTimeout:       s.cfg.ReadTimeout,
		IdleTimeout:       120 * time.Second,
		ErrorLog:          s.cfg.Log,
	}
}

func (s *Server) run(hs *http.Server, ln net.Listener) {
	if err := hs.Serve(ln); err != nil && !errors.Is(err, http.ErrServerClosed) {
		s.logf("serve: %v", err)
	}
}

// BootstrapAddr is the plain-HTTP listening address ("" if none).
func (s *Server) BootstrapAddr() string {
	if s.bootLn == nil {
		return ""
	}
	return s.bootLn.Addr().String()
}

// Addr is the listening address.
func (s *Server) Addr() string {
	if s.ln == nil {
		return ""
	}
	return s.ln.Addr().String()
}

// URL is the base URL of the listening hub.
func (s *Server) URL() string {
	if s.cfg.Certs != nil {
		return "https://" + s.Addr()
	}
	return "http://" + s.Addr()
}

// Close stops accepting, drops websockets and waits for handlers up to
// DefaultShutdownTimeout. It does not close the store.
func (s *Server) Close() error {
	s.stopOnce.Do(func() {
		// Under the flags' lock: a recomputation is either counted before
		// the stop or sees it and never starts.
		s.flags.mu.Lock()
		close(s.stop)
		s.flags.mu.Unlock()
	})
	s.hub.CloseAll(true)
	ctx, cancel := context.WithTimeout(context.Background(), DefaultShutdownTimeout)
	defer cancel()
	var errs []error
	for _, hs := range []*http.Server{s.http, s.boot} {
		if hs != nil {
			errs = append(errs, hs.Shutdown(ctx))
		}
	}
	// The flags' background work (today's refresh, the recomputations
	// after a push) ends before Close returns, so the store can be closed
	// after it without a read racing the close.
	s.flags.work.Wait()
	return errors.Join(errs...)
}

// stampNow issues a hub timestamp.
func (s *Server) stampNow() devsync.HLC {
	s.clockMu.Lock()
	defer s.clockMu.Unlock()
	return s.clock.Now(s.now().UnixMilli())
}

// observe applies the receive rule for a stamp seen in a push.
func (s *Server) observe(h devsync.HLC) devsync.HLC {
	s.clockMu.Lock()
	defer s.clockMu.Unlock()
	return s.clock.Update(h, s.now().UnixMilli())
}
