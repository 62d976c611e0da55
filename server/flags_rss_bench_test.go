package server_test

import (
	"bytes"
	"fmt"
	"io"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"testing"
	"time"

	"cornerbook/server"
	"cornerbook/server/demo"
)

// rssMB is this process's resident set (Linux /proc), in MB.
func rssMB(b *testing.B) float64 {
	raw, err := os.ReadFile("/proc/self/status")
	if err != nil {
		b.Skip("no /proc/self/status on this system")
	}
	for _, line := range bytes.Split(raw, []byte("\n")) {
		if f := bytes.Fields(line); len(f) >= 2 && string(f[0]) == "VmRSS:" {
			kb, _ := strconv.ParseFloat(string(f[1]), 64)
			return kb / 1024
		}
	}
	b.Skip("no VmRSS")
	return 0
}

// BenchmarkFlagsManyDays asks the demo camp's hub, over HTTP on loopback,
// for the whole camp's flags of 10,000 distinct days (0001-01-01 on, one
// every 365 days, then every day around the camp) — a hostile device
// walking the calendar. Reported: the process's RSS before (the camp
// open, today's flags computed once) and after, their ratio, and the
// cache's entries. Target: under 150 MB after.
func BenchmarkFlagsManyDays(b *testing.B) {
	now := func() time.Time { return demoToday }
	db, err := server.OpenStore(filepath.Join(b.TempDir(), "demo.db"), now)
	if err != nil {
		b.Fatal(err)
	}
	defer db.Close()
	if _, err := demo.SeedIfEmpty(db, demoToday); err != nil {
		b.Fatal(err)
	}
	srv, err := server.New(server.Config{Store: db, Now: now, Location: time.UTC})
	if err != nil {
		b.Fatal(err)
	}
	defer srv.Close()
	ts := httptest.NewServer(srv.Handler())
	defer ts.Close()
	get := func(day string) {
		resp, err := http.Get(ts.URL + "/api/flags?day=" + day)
		if err != nil {
			b.Fatal(err)
		}
		io.Copy(io.Discard, resp.Body)
		resp.Body.Close()
		if resp.StatusCode != 200 {
			b.Fatalf("day %s: %d", day, resp.StatusCode)
		}
	}
	var days []string
	for y := 1; y < 9999 && len(days) < 5000; y += 2 {
		days = append(days, fmt.Sprintf("%04d-03-01", y))
	}
	start := demoToday.AddDate(0, 0, -2500)
	for d := 0; len(days) < 10000; d++ {
		days = append(days, start.AddDate(0, 0, d).Format("2006-01-02"))
	}
	get(demoToday.Format("2006-01-02"))
	runtime.GC()
	before := rssMB(b)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		for _, d := range days {
			get(d)
		}
	}
	b.StopTimer()
	runtime.GC()
	after := rssMB(b)
	b.ReportMetric(before, "MB-RSS-before")
	b.ReportMetric(after, "MB-RSS-after")
	b.ReportMetric(after/before, "after/before")
	b.ReportMetric(float64(srv.FlagCacheLen()), "cached-days")
	if after > 150 {
		b.Errorf("RSS after 10,000 days: %.0f MB, over 150 MB", after)
	}
}
