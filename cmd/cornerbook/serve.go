package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"log"
	"net"
	"os"
	"path/filepath"
	"strings"
	"time"

	"cornerbook/server"
	"cornerbook/server/demo"
	"cornerbook/storage"
)

// Defaults, in one place.
const (
	DefaultDataDir = "./cornerbook-data"
	DemoDataDir    = "./cornerbook-demo"
	DefaultAddr    = ":8080"
	dbFile         = "cornerbook.db"
)

var errUsage = errors.New("usage")

// Config is the hub's configuration from the command line.
type Config struct {
	DataDir string // folder holding the database, certificates and snapshots
	Addr    string // listen address of the app
	Demo    bool   // serve the invented demo camp from DemoDataDir
}

// Main is a running hub: tests start it on ":0" with a temp folder.
type Main struct {
	Config Config
	Now    func() time.Time // nil means time.Now
	Stdout io.Writer
	Log    *log.Logger

	Store  *storage.DB
	Server *server.Server
}

// NewMain returns a Main with the defaults.
func NewMain() *Main {
	return &Main{Config: Config{DataDir: DefaultDataDir, Addr: DefaultAddr}, Stdout: os.Stdout}
}

// ParseFlags reads the serve command line.
func (m *Main) ParseFlags(args []string, stderr io.Writer) error {
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	fs.SetOutput(stderr)
	data := fs.String("data", "", "data folder (default "+DefaultDataDir+"; "+DemoDataDir+" with --demo)")
	fs.StringVar(&m.Config.Addr, "addr", m.Config.Addr, "listen address")
	fs.BoolVar(&m.Config.Demo, "demo", false, "serve the invented demo camp from its own folder, creating it on first use")
	if err := parseInterleaved(fs, args); err != nil {
		return errUsage
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "serve takes no arguments; got %q\n", fs.Args())
		return errUsage
	}
	switch {
	case *data != "":
		m.Config.DataDir = *data
	case m.Config.Demo:
		m.Config.DataDir = DemoDataDir
	}
	return nil
}

// Run opens the data folder, seeds the demo on first use, and starts
// listening. It returns once the hub answers.
func (m *Main) Run(ctx context.Context) error {
	if m.Now == nil {
		m.Now = time.Now
	}
	if m.Log == nil {
		m.Log = log.New(os.Stderr, "", log.LstdFlags)
	}
	db, err := openData(m.Config.DataDir, m.Now)
	if err != nil {
		return err
	}
	m.Store = db
	if m.Config.Demo {
		n, err := demo.SeedIfEmpty(db, m.Now())
		if err != nil {
			return fmt.Errorf("seed the demo camp: %w", err)
		}
		if n > 0 {
			m.Log.Printf("demo camp created: %d records in %s", n, m.Config.DataDir)
		}
	}
	srv, err := server.New(server.Config{Store: db, Now: m.Now, Log: m.Log})
	if err != nil {
		return err
	}
	m.Server = srv
	if err := srv.Open(m.Config.Addr); err != nil {
		return err
	}
	m.printAddresses()
	return nil
}

func (m *Main) printAddresses() {
	_, port, _ := net.SplitHostPort(m.Server.Addr())
	fmt.Fprintf(m.Stdout, "Cornerbook hub is running.\n  On this laptop:  http://localhost:%s/\n", port)
	addrs, _ := net.InterfaceAddrs()
	for _, a := range addrs {
		if ipn, ok := a.(*net.IPNet); ok && ipn.IP.To4() != nil && !ipn.IP.IsLoopback() {
			fmt.Fprintf(m.Stdout, "  On the camp Wi-Fi: http://%s:%s/\n", ipn.IP, port)
		}
	}
	fmt.Fprintf(m.Stdout, "  Data folder: %s\nPress Ctrl+C to stop.\n", m.Config.DataDir)
}

// Close shuts the hub down and closes the store.
func (m *Main) Close() error {
	var errs []error
	if m.Server != nil {
		errs = append(errs, m.Server.Close())
	}
	if m.Store != nil {
		errs = append(errs, m.Store.Close())
	}
	return errors.Join(errs...)
}

func runServe(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	m := NewMain()
	m.Stdout = stdout
	m.Log = log.New(stderr, "", log.LstdFlags)
	if err := m.ParseFlags(args, stderr); err != nil {
		return err
	}
	if err := m.Run(ctx); err != nil {
		m.Close()
		return err
	}
	<-ctx.Done()
	fmt.Fprintln(stdout, "Stopping the hub…")
	return m.Close()
}

// openData opens DIR/cornerbook.db, creating the folder.
func openData(dir string, now func() time.Time) (*storage.DB, error) {
	if err := os.MkdirAll(dir, 0o700); err != nil {
		return nil, fmt.Errorf("create the data folder: %w", err)
	}
	db, err := server.OpenStore(dataPath(dir), now)
	if errors.Is(err, storage.ErrLocked) {
		return nil, fmt.Errorf("%s: %w (stop the running hub first, or use its screens)", dir, storage.ErrLocked)
	}
	return db, err
}

// parseInterleaved lets flags follow positional arguments
// ("import FILE --data DIR" as well as "import --data DIR FILE").
func parseInterleaved(fs *flag.FlagSet, args []string) error {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return err
		}
		if fs.NArg() == 0 {
			break
		}
		rest := fs.Args()
		pos = append(pos, rest[0])
		args = rest[1:]
		if rest[0] == "-" && len(args) == 0 {
			break
		}
		if len(args) == 0 {
			break
		}
	}
	return fs.Parse(append([]string{"--"}, pos...))
}

var _ = strings.TrimSpace

// dataPath is the database file of a data folder.
func dataPath(dir string) string { return filepath.Join(dir, dbFile) }
