// Command cornerbook-load proves the hub under load: it pairs N simulated
// devices with a hub on this machine (real join codes, real device
// tokens), has each push D days of offline backlog at once through the
// real sync protocol, pulls everything back as the coach, and checks that
// the store holds every record exactly once with the body that was sent.
// It reports records per second, push latency percentiles and every
// error.
//
// It only ever talks to 127.0.0.1 (or ::1): any other host is refused,
// and the dialer refuses any other address as well.
//
//	cornerbook-load --self                       # its own hub in a temp folder
//	cornerbook-load --url https://127.0.0.1:8443 --ca-file cornerbook-data/tls/ca.crt
package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"
	"time"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	os.Exit(cli(ctx, os.Args[1:], os.Stdout, os.Stderr))
}

// cli runs one command line and returns the exit code: 0 when the run had
// no errors and nothing was lost or doubled, 1 when it did, 2 for a bad
// command line.
func cli(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	cfg, asJSON, err := ParseFlags(args, stderr)
	if errors.Is(err, flag.ErrHelp) {
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "cornerbook-load: %v\n", err)
		return 2
	}
	cfg.Log = stderr
	rep, err := Run(ctx, cfg)
	if asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		enc.Encode(rep)
	} else {
		rep.WriteText(stdout)
	}
	if err != nil {
		fmt.Fprintf(stderr, "cornerbook-load: %v\n", err)
		return 1
	}
	if !rep.OK() {
		fmt.Fprintln(stderr, "cornerbook-load: the run had errors or lost or doubled records (see above)")
		return 1
	}
	return 0
}

// ParseFlags reads the command line into a Config.
func ParseFlags(args []string, stderr io.Writer) (Config, bool, error) {
	cfg := DefaultConfig()
	fs := flag.NewFlagSet("cornerbook-load", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, "Usage: cornerbook-load [--self | --url URL [--ca-file FILE]] [--devices N] [--days D] [--batch B] [--timeout T] [--json]\n\n")
		fs.PrintDefaults()
	}
	fs.StringVar(&cfg.URL, "url", cfg.URL, "hub address on this machine: https://127.0.0.1:PORT (with --ca-file) or http://127.0.0.1:PORT")
	fs.StringVar(&cfg.CAFile, "ca-file", "", "the camp authority's certificate (DATA/tls/ca.crt) for an https --url")
	fs.IntVar(&cfg.Devices, "devices", cfg.Devices, "simulated devices (one athlete per 5 devices)")
	fs.IntVar(&cfg.Days, "days", cfg.Days, "days of offline backlog per device (about 8 records a day)")
	fs.IntVar(&cfg.Batch, "batch", cfg.Batch, fmt.Sprintf("mutations per push, 1 to %d", MaxBatch))
	fs.DurationVar(&cfg.Timeout, "timeout", cfg.Timeout, "give up after this long (setup, pushes, pull and checks)")
	fs.BoolVar(&cfg.Self, "self", false, "start a hub in-process in a temporary folder on 127.0.0.1 and load that")
	fs.BoolVar(&cfg.SelfTLS, "self-tls", true, "with --self: serve HTTPS with a fresh camp certificate (false: plain HTTP)")
	fs.StringVar(&cfg.DeviceHost, "device-host", cfg.DeviceHost, "Host header of device requests, so the hub checks their tokens as it does on the camp Wi-Fi (empty: requests count as the laptop's own)")
	fs.Int64Var(&cfg.Seed, "seed", cfg.Seed, "seed of the generated entries")
	asJSON := fs.Bool("json", false, "print the report as JSON")
	if err := fs.Parse(args); err != nil {
		return cfg, false, err
	}
	if fs.NArg() > 0 {
		return cfg, false, fmt.Errorf("takes no arguments; got %q", fs.Args())
	}
	if err := cfg.check(); err != nil {
		return cfg, false, err
	}
	return cfg, *asJSON, nil
}

// Defaults, in one place.
const (
	DefaultURL        = "https://127.0.0.1:8443"
	DefaultDevices    = 50
	DefaultDays       = 14
	DefaultBatch      = 200
	DefaultTimeout    = 2 * time.Minute
	DefaultDeviceHost = "camp.local"
	// MaxBatch is the protocol's batch limit (ENGINEERING.md §3.6: ≤ 200
	// mutations per push; the hub itself takes up to 500).
	MaxBatch = 200
	// MaxDevices and MaxDays bound a run.
	MaxDevices = 1000
	MaxDays    = 400
	// DevicesPerAthlete: each athlete has one phone and four staff
	// tablets logging for them.
	DevicesPerAthlete = 5
)

// DefaultConfig is the configuration of a plain `cornerbook-load`.
func DefaultConfig() Config {
	return Config{URL: DefaultURL, Devices: DefaultDevices, Days: DefaultDays, Batch: DefaultBatch,
		Timeout: DefaultTimeout, SelfTLS: true, DeviceHost: DefaultDeviceHost, Seed: 1}
}

func (c *Config) check() error {
	switch {
	case c.Devices < 1 || c.Devices > MaxDevices:
		return fmt.Errorf("--devices must be between 1 and %d; got %d", MaxDevices, c.Devices)
	case c.Days < 1 || c.Days > MaxDays:
		return fmt.Errorf("--days must be between 1 and %d; got %d", MaxDays, c.Days)
	case c.Batch < 1 || c.Batch > MaxBatch:
		return fmt.Errorf("--batch must be between 1 and %d; got %d", MaxBatch, c.Batch)
	case c.Timeout <= 0:
		return fmt.Errorf("--timeout must be positive; got %s", c.Timeout)
	}
	if !c.Self {
		if _, err := loopbackURL(c.URL); err != nil {
			return err
		}
	}
	return nil
}
