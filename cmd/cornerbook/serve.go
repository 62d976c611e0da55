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
	"sort"
	"strings"
	"sync"
	"time"

	"cornerbook/server"
	"cornerbook/server/auth"
	"cornerbook/server/certs"
	"cornerbook/server/demo"
	"cornerbook/server/lan"
	"cornerbook/storage"
)

// Defaults, in one place.
const (
	DefaultDataDir  = "./cornerbook-data"
	DemoDataDir     = "./cornerbook-demo"
	DefaultAddr     = ":8443" // HTTPS: the app on the camp Wi-Fi
	DefaultHTTPAddr = ":8080" // plain HTTP: the join page for phones, the coach's screen on this laptop
	dbFile          = "cornerbook.db"
	tlsDir          = "tls"
	snapshotDir     = "snapshots"
	// hubAddressFile holds, while a hub runs on the folder, the loopback
	// address of its plain-HTTP port: commands that find the folder in
	// use ask that hub instead (cornerbook backup).
	hubAddressFile = "hub-address"
	// SnapshotsKept is how many daily snapshots stay in the data folder.
	SnapshotsKept = 14
)

var errUsage = errors.New("usage")

// Config is the hub's configuration from the command line.
type Config struct {
	DataDir  string // folder holding the database, certificates and snapshots
	Addr     string // HTTPS listen address of the app
	HTTPAddr string // plain-HTTP listen address: join page, and the app for this laptop's own browser
	Demo     bool   // serve the invented demo camp from DemoDataDir
	// Announce answers for the camp's name on the Wi-Fi (multicast DNS)
	// even with Demo; without Demo the hub announces whenever its app
	// listens on a LAN address. Never on loopback.
	Announce bool
}

// Main is a running hub: tests start it on ":0" with a temp folder.
type Main struct {
	Config Config
	Now    func() time.Time // nil means time.Now
	Stdout io.Writer
	Log    *log.Logger

	Store  *storage.DB
	Server *server.Server
	Auth   *auth.Store
	Certs  *certs.Bundle
	stop   context.CancelFunc

	joinURL string         // the join page as phones reach it; "" if they cannot
	bg      sync.WaitGroup // background work that writes into the data folder
	// LANHost is this laptop's LAN address (nil: primaryHost).
	LANHost  func() string
	campName string // the name announced on the Wi-Fi; "" when not announcing
}

// NewMain returns a Main with the defaults.
func NewMain() *Main {
	return &Main{Config: Config{DataDir: DefaultDataDir, Addr: DefaultAddr, HTTPAddr: DefaultHTTPAddr}, Stdout: os.Stdout}
}

// flagSet is the serve command line's options, bound to m.Config; data
// receives --data.
func (m *Main) flagSet(stderr io.Writer) (fs *flag.FlagSet, data *string) {
	fs = flag.NewFlagSet("serve", flag.ContinueOnError)
	fs.SetOutput(stderr)
	data = fs.String("data", "", "data folder (default "+DefaultDataDir+"; "+DemoDataDir+" with --demo)")
	fs.StringVar(&m.Config.Addr, "addr", m.Config.Addr, "HTTPS listen address of the app on the camp Wi-Fi")
	fs.StringVar(&m.Config.HTTPAddr, "http-addr", m.Config.HTTPAddr, "plain-HTTP address: the join page for phones and the coach's screen on this laptop")
	fs.BoolVar(&m.Config.Demo, "demo", false, "serve the invented demo camp from its own folder, creating it on first use")
	fs.BoolVar(&m.Config.Announce, "announce", false, "announce the hub's name on the camp Wi-Fi with --demo too (always on otherwise, never on loopback)")
	return fs, data
}

// ParseFlags reads the serve command line.
func (m *Main) ParseFlags(args []string, stderr io.Writer) error {
	fs, data := m.flagSet(stderr)
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
	accounts, err := auth.Open(db.Bolt(), auth.Options{Now: m.Now})
	if err != nil {
		return fmt.Errorf("open the device list: %w", err)
	}
	m.Auth = accounts
	bundle, err := certs.Ensure(filepath.Join(m.Config.DataDir, tlsDir), certs.CurrentNames(), m.Now())
	if err != nil {
		return fmt.Errorf("camp certificate: %w", err)
	}
	m.Certs = bundle
	httpsLn, err := net.Listen("tcp", m.Config.Addr)
	if err != nil {
		return fmt.Errorf("listen on %s: %w", m.Config.Addr, err)
	}
	httpLn, err := net.Listen("tcp", m.Config.HTTPAddr)
	if err != nil {
		httpsLn.Close()
		return fmt.Errorf("listen on %s: %w", m.Config.HTTPAddr, err)
	}
	if m.LANHost == nil {
		m.LANHost = primaryHost
	}
	_, httpsPort, _ := net.SplitHostPort(httpsLn.Addr().String())
	appHost := phoneHost(httpsLn.Addr(), m.LANHost)
	if shouldAnnounce(m.Config, appHost) {
		m.campName = certs.CampName(certs.CurrentNames().Host)
	}
	if appHost == "" {
		appHost = "localhost"
	}
	if m.campName != "" {
		appHost = m.campName // the name phones keep when the camp moves
	}
	appURL := "https://" + net.JoinHostPort(appHost, httpsPort) + "/"
	joinURL := ""
	if h := phoneHost(httpLn.Addr(), m.LANHost); h != "" {
		if m.campName != "" {
			h = m.campName
		}
		_, httpPort, _ := net.SplitHostPort(httpLn.Addr().String())
		joinURL = "http://" + net.JoinHostPort(h, httpPort) + "/"
	}
	m.joinURL = joinURL
	srv, err := server.New(server.Config{Store: db, Now: m.Now, Log: m.Log, Auth: accounts, Certs: bundle,
		AppURL: appURL, JoinURL: joinURL, DataDir: m.Config.DataDir})
	if err != nil {
		return err
	}
	m.Server = srv
	srv.Serve(httpsLn)
	srv.ServeBootstrap(httpLn)
	ctx, m.stop = context.WithCancel(ctx)
	go bundle.Keep(ctx, 5*time.Minute, certs.CurrentNames, m.Now, func(reason string, err error) {
		if err != nil {
			m.Log.Printf("camp certificate: could not renew (%s): %v", reason, err)
		} else {
			m.Log.Printf("camp certificate renewed: %s", reason)
		}
	})
	m.bg.Add(1)
	go func() {
		defer m.bg.Done()
		m.snapshots(ctx)
	}()
	if m.campName != "" {
		r := &lan.Responder{Name: m.campName, Addrs: func() []net.IP { return certs.CurrentNames().IPs }}
		go func() {
			if err := r.Serve(ctx, m.Log.Printf); err != nil {
				m.Log.Printf("camp name %s not announced: %v (phones use the address instead)", m.campName, err)
			}
		}()
	}
	m.noteAddressChange()
	m.writeHubAddress(httpLn.Addr())
	m.printAddresses(appURL)
	return nil
}

// writeHubAddress records where commands on this laptop reach the hub,
// when its plain-HTTP port listens on loopback (all addresses or
// 127.0.0.1); a port bound to one LAN address only is not reachable so.
func (m *Main) writeHubAddress(addr net.Addr) {
	tcp, ok := addr.(*net.TCPAddr)
	if !ok || !(tcp.IP.IsUnspecified() || tcp.IP.IsLoopback()) {
		return
	}
	url := fmt.Sprintf("http://127.0.0.1:%d/", tcp.Port)
	path := filepath.Join(m.Config.DataDir, hubAddressFile)
	if err := os.WriteFile(path, []byte(url+"\n"), 0o600); err != nil {
		m.Log.Printf("could not note the hub's address for commands: %v", err)
	}
}

// snapshots writes one daily snapshot into the data folder, now and then
// every hour when the day changes, keeping SnapshotsKept.
func (m *Main) snapshots(ctx context.Context) {
	dir := filepath.Join(m.Config.DataDir, snapshotDir)
	for {
		if path, err := storage.Snapshot(m.Store, dir, m.Now().Format("2006-01-02"), SnapshotsKept); err != nil {
			m.Log.Printf("daily snapshot: %v", err)
		} else if path != "" {
			m.Log.Printf("daily snapshot written: %s", path)
		}
		select {
		case <-ctx.Done():
			return
		case <-time.After(time.Hour):
		}
	}
}

// shouldAnnounce says whether the hub answers for its camp name on the
// Wi-Fi: only when its app listens where phones reach it (appHost is
// not "": never on loopback), and not for the demo camp unless asked
// (--announce), so no development or test run sends multicast.
func shouldAnnounce(c Config, appHost string) bool {
	return appHost != "" && (!c.Demo || c.Announce)
}

// lastAddressFile keeps the LAN address of the last start.
const lastAddressFile = "last-address"

// noteAddressChange tells the coach when the laptop's LAN address is not
// the one of the last start (a new venue, a new Wi-Fi), and what phones
// will see.
func (m *Main) noteAddressChange() {
	now := m.LANHost()
	path := filepath.Join(m.Config.DataDir, lastAddressFile)
	raw, err := os.ReadFile(path)
	before := strings.TrimSpace(string(raw))
	if err == nil && before != "" && before != now {
		w := m.Stdout
		fmt.Fprintf(w, "This laptop's address changed since the last start: it was %s, it is now %s.\n", before, now)
		if m.campName != "" {
			fmt.Fprintf(w, "  Phones that opened the app by the camp's name (%s) find the hub again by themselves.\n", m.campName)
			fmt.Fprintf(w, "  Phones that opened it by the old address show \"Hub unreachable\": open %s on them (their entries wait safely meanwhile).\n\n", m.joinURL)
		} else {
			fmt.Fprintf(w, "  Phones that opened the app at %s show \"Hub unreachable\" until they open the new join page (their entries wait safely meanwhile).\n\n", before)
		}
	}
	if now != before {
		if err := os.WriteFile(path, []byte(now+"\n"), 0o600); err != nil {
			m.Log.Printf("could not note this laptop's address: %v", err)
		}
	}
}

// phoneHost is the host phones use to reach a listener: "" when it
// listens on loopback only (phones cannot reach it), the LAN address
// primary gives when it listens on all addresses, else its own address.
func phoneHost(addr net.Addr, primary func() string) string {
	tcp, ok := addr.(*net.TCPAddr)
	switch {
	case !ok:
		return ""
	case tcp.IP.IsLoopback():
		return ""
	case tcp.IP.IsUnspecified():
		if h := primary(); h != "localhost" {
			return h
		}
		return ""
	}
	return tcp.IP.String()
}

// primaryHost is the address phones use: the first LAN IPv4 address, else localhost.
func primaryHost() string {
	names := certs.CurrentNames()
	for _, ip := range names.IPs {
		if ip.To4() != nil && !ip.IsLoopback() {
			return ip.String()
		}
	}
	return "localhost"
}

func (m *Main) printAddresses(appURL string) {
	_, httpPort, _ := net.SplitHostPort(m.Server.BootstrapAddr())
	w := m.Stdout
	fmt.Fprintf(w, "Cornerbook hub is running (data folder %s).\n\n", m.Config.DataDir)
	fmt.Fprintf(w, "  Coach, on this laptop:   http://localhost:%s/\n", httpPort)
	if m.joinURL == "" {
		fmt.Fprintf(w, "  Phones and tablets:      cannot reach this hub: it listens on this laptop only (--http-addr %s).\n", m.Config.HTTPAddr)
		fmt.Fprintf(w, "                           Start it with --http-addr :%s to let phones join over the Wi-Fi.\n\n", httpPort)
	} else {
		fmt.Fprintf(w, "  Phones and tablets:      %s  (join page: trust the camp certificate once)\n", m.joinURL)
		fmt.Fprintf(w, "  The app on the camp Wi-Fi: %s\n\n", appURL)
	}
	fmt.Fprintf(w, "  Camp certificate fingerprint (SHA-256):\n    %s\n", m.Certs.Fingerprint())
	if !m.Auth.HasPassphrase() {
		fmt.Fprintf(w, "\n  No coach passphrase yet: set it on this laptop's screen, or elsewhere with the setup code %s\n", m.Auth.SetupCode())
	}
	if m.joinURL != "" {
		fmt.Fprintf(w, "\nScan to open the join page:\n%s", auth.QRTerminal(m.joinURL))
	}
	fmt.Fprintf(w, "\nPress Ctrl+C to stop.\n")
}

// Close shuts the hub down and closes the store.
func (m *Main) Close() error {
	var errs []error
	if m.stop != nil {
		m.stop()
		m.bg.Wait() // a snapshot being written is finished first
		os.Remove(filepath.Join(m.Config.DataDir, hubAddressFile))
	}
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
	if de := (*storage.DamagedError)(nil); errors.As(err, &de) {
		return nil, damagedAdvice(dir, de)
	}
	return db, err
}

// damagedAdvice is what the coach reads when the data file fails its
// check: what is wrong, that nothing was served from it, and the one
// command that brings back the newest sound snapshot.
func damagedAdvice(dir string, de *storage.DamagedError) error {
	var b strings.Builder
	fmt.Fprintf(&b, "the data file %s failed its check, so the hub did not start and served nothing from it.\n", de.Path)
	fmt.Fprintf(&b, "  What is wrong: %v\n", de.Problem)
	if snap := newestSoundSnapshot(dir); snap != "" {
		fmt.Fprintf(&b, "  The newest sound snapshot is %s.\n", snap)
		fmt.Fprintf(&b, "  To go back to it (the damaged file is kept beside it, renamed), run:\n\n")
		fmt.Fprintf(&b, "    cornerbook restore --data %s %s\n\n", dir, snap)
		b.WriteString("  then start the hub again. Phones re-send what they logged since that snapshot.")
	} else {
		b.WriteString("  No sound snapshot was found in " + filepath.Join(dir, snapshotDir) + ".\n")
		b.WriteString("  If you have a backup file, run:  cornerbook restore --data " + dir + " BACKUP-FILE")
	}
	return errors.New(b.String())
}

// newestSoundSnapshot is the newest daily snapshot of dir that passes the
// check, or "".
func newestSoundSnapshot(dir string) string {
	names, _ := filepath.Glob(filepath.Join(dir, snapshotDir, "cornerbook-????-??-??.db"))
	sort.Sort(sort.Reverse(sort.StringSlice(names)))
	for _, n := range names {
		if storage.VerifyFile(n) == nil {
			return n
		}
	}
	return ""
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

// dataPath is the database file of a data folder.
func dataPath(dir string) string { return filepath.Join(dir, dbFile) }
