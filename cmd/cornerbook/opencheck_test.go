package main

import (
	"context"
	"encoding/json"
	"flag"
	"io"
	"log"
	"net"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/server/certs"
	"cornerbook/storage"
)

// TestServe_RefusesADamagedFile: a hub pointed at a damaged data file
// exits within 2 s, serving nothing, with plain words naming the newest
// sound snapshot and the restore command; running that command brings
// the camp back.
func TestServe_RefusesADamagedFile(t *testing.T) {
	m := mustRunMain(t, true)
	dir := m.Config.DataDir
	require.NoError(t, m.Close())
	snaps := filepath.Join(dir, snapshotDir)
	os.RemoveAll(snaps)
	db, err := storage.Open(dataPath(dir), storage.Options{})
	require.NoError(t, err)
	_, err = storage.Snapshot(db, snaps, "2026-11-30", SnapshotsKept)
	require.NoError(t, err)
	_, err = storage.Snapshot(db, snaps, "2026-12-01", SnapshotsKept)
	require.NoError(t, err)
	require.NoError(t, db.Close())
	_, original, _ := runCmd(t, "", "export", "--data", dir)
	// The newest snapshot is itself cut short: the advice skips it.
	newest := filepath.Join(snaps, storage.SnapshotName("2026-12-01"))
	raw, err := os.ReadFile(newest)
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(newest, raw[:len(raw)/2], 0o600))
	good := filepath.Join(snaps, storage.SnapshotName("2026-11-30"))

	// The data file loses its second half.
	live, err := os.ReadFile(dataPath(dir))
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(dataPath(dir), live[:len(live)/2], 0o600))

	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	start := time.Now()
	var out, errb strings.Builder
	code := Run(ctx, []string{"serve", "--data", dir, "--addr", "127.0.0.1:0", "--http-addr", "127.0.0.1:0"}, strings.NewReader(""), &out, &errb)
	took := time.Since(start)
	assert.Equal(t, 1, code)
	assert.Less(t, took, 2*time.Second, "the refusal took %v", took)
	msg := errb.String()
	assert.NotContains(t, out.String(), "running")
	assert.Contains(t, msg, "failed its check")
	assert.Contains(t, msg, "cut short")
	assert.Contains(t, msg, "The newest sound snapshot is "+good)
	cmdLine := "cornerbook restore --data " + dir + " " + good
	require.Contains(t, msg, cmdLine)
	if names, _ := filepath.Glob(filepath.Join(snaps, "*")); len(names) != 2 {
		t.Fatalf("snapshots after the refusal: %v", names)
	}

	// The advised command works on the damaged folder.
	code, _, stderr := runCmd(t, "", strings.Fields(cmdLine)[1:]...)
	require.Equal(t, 0, code, stderr)
	_, restored, _ := runCmd(t, "", "export", "--data", dir)
	assert.Equal(t, original, restored)
}

// TestServe_RefusesAnEmptyFile: a zero-byte data file is not
// taken for a new camp.
func TestServe_RefusesAnEmptyFile(t *testing.T) {
	dir := t.TempDir()
	require.NoError(t, os.WriteFile(dataPath(dir), nil, 0o600))
	code, out, stderr := runCmd(t, "", "serve", "--data", dir, "--addr", "127.0.0.1:0", "--http-addr", "127.0.0.1:0")
	assert.Equal(t, 1, code)
	assert.NotContains(t, out, "running")
	assert.Contains(t, stderr, "the file is empty")
	assert.Contains(t, stderr, "No sound snapshot was found")
	st, err := os.Stat(dataPath(dir))
	require.NoError(t, err)
	assert.Zero(t, st.Size(), "the empty file was initialised over")
}

// TestCommands_BackupWhileTheHubRuns: with a hub holding the folder,
// `cornerbook backup` asks it for a hot copy over loopback; the file is
// one that `restore` accepts, holding the camp.
func TestCommands_BackupWhileTheHubRuns(t *testing.T) {
	m := mustRunMain(t, true)
	dir := m.Config.DataDir
	backup := filepath.Join(t.TempDir(), "while-running.db")
	code, out, stderr := runCmd(t, "", "backup", "--data", dir, backup)
	require.Equal(t, 0, code, stderr)
	assert.Contains(t, out, "from the running hub")
	require.NoError(t, storage.VerifyFile(backup))

	fresh := filepath.Join(t.TempDir(), "restored")
	code, _, stderr = runCmd(t, "", "restore", "--data", fresh, backup)
	require.Equal(t, 0, code, stderr)
	require.NoError(t, m.Close())
	_, original, _ := runCmd(t, "", "export", "--data", dir)
	_, restored, _ := runCmd(t, "", "export", "--data", fresh)
	assert.Equal(t, original, restored)
	assert.NoFileExists(t, filepath.Join(dir, hubAddressFile), "the address note goes with the hub")
}

// TestCommands_HelpListsEveryServeOption: help names each serve option.
func TestCommands_HelpListsEveryServeOption(t *testing.T) {
	code, out, _ := runCmd(t, "", "help")
	require.Equal(t, 0, code)
	m := NewMain()
	var sink strings.Builder
	fs, _ := m.flagSet(&sink)
	fs.VisitAll(func(f *flag.Flag) {
		assert.Contains(t, out, "--"+f.Name+" ", "help omits --%s", f.Name)
	})
}

// TestMain_LoopbackOnlyTellsPhonesNothing: a hub whose join port listens
// on 127.0.0.1 says phones cannot reach it, and shows no LAN address
// (in its console or on Camp set-up) where it does not listen.
func TestMain_LoopbackOnlyTellsPhonesNothing(t *testing.T) {
	m := NewMain()
	m.Config.Addr, m.Config.HTTPAddr, m.Config.DataDir = "127.0.0.1:0", "127.0.0.1:0", t.TempDir()
	var out strings.Builder
	m.Stdout = &out
	m.Log = log.New(io.Discard, "", 0)
	require.NoError(t, m.Run(context.Background()))
	defer m.Close()
	assert.Contains(t, out.String(), "cannot reach this hub: it listens on this laptop only")
	assert.NotContains(t, out.String(), "Scan to open")
	for _, ip := range certs.CurrentNames().IPs {
		if !ip.IsLoopback() {
			assert.NotContains(t, out.String(), ip.String())
		}
	}
	resp, err := http.Get("http://" + m.Server.BootstrapAddr() + "/api/me")
	require.NoError(t, err)
	var me struct{ JoinURL string }
	require.NoError(t, json.NewDecoder(resp.Body).Decode(&me))
	resp.Body.Close()
	assert.Empty(t, me.JoinURL)
}

// TestPhoneHost: the host phones are told for each kind of listen address.
func TestPhoneHost(t *testing.T) {
	lan := func() string { return "192.0.2.10" }
	none := func() string { return "localhost" }
	cases := []struct {
		ip      string
		primary func() string
		want    string
	}{
		{"127.0.0.1", lan, ""},
		{"::1", lan, ""},
		{"0.0.0.0", lan, "192.0.2.10"},
		{"::", lan, "192.0.2.10"},
		{"0.0.0.0", none, ""},
		{"192.0.2.20", lan, "192.0.2.20"},
	}
	for _, c := range cases {
		got := phoneHost(&net.TCPAddr{IP: net.ParseIP(c.ip), Port: 8080}, c.primary)
		assert.Equal(t, c.want, got, "listening on %s", c.ip)
	}
}

// TestShouldAnnounce: the camp's name goes on the Wi-Fi only when the
// app listens where phones reach it, and not for the demo camp unless
// asked — so no development or CI run sends multicast.
func TestShouldAnnounce(t *testing.T) {
	cases := []struct {
		demo, announce bool
		appHost        string
		want           bool
	}{
		{false, false, "192.0.2.10", true},
		{false, false, "", false}, // loopback only
		{false, true, "", false},  // not even when asked
		{true, false, "192.0.2.10", false},
		{true, true, "192.0.2.10", true},
	}
	for _, c := range cases {
		assert.Equal(t, c.want, shouldAnnounce(Config{Demo: c.demo, Announce: c.announce}, c.appHost), "%+v", c)
	}
	m := mustRunMain(t, false) // 127.0.0.1 only
	assert.Empty(t, m.campName, "a hub on loopback announces nothing")
}

// TestMain_SaysWhenTheAddressChanged: started again with another LAN
// address, the hub says so, names both addresses and what phones will
// see; started again at the same address, it says nothing of it.
func TestMain_SaysWhenTheAddressChanged(t *testing.T) {
	dir := t.TempDir()
	start := func(lan string) string {
		m := NewMain()
		m.Config.Addr, m.Config.HTTPAddr, m.Config.DataDir = "127.0.0.1:0", "127.0.0.1:0", dir
		var out strings.Builder
		m.Stdout = &out
		m.Log = log.New(io.Discard, "", 0)
		m.LANHost = func() string { return lan }
		require.NoError(t, m.Run(context.Background()))
		require.NoError(t, m.Close())
		return out.String()
	}
	assert.NotContains(t, start("192.0.2.5"), "address changed")
	assert.NotContains(t, start("192.0.2.5"), "address changed")
	out := start("198.51.100.7")
	assert.Contains(t, out, "address changed since the last start: it was 192.0.2.5, it is now 198.51.100.7")
	assert.Contains(t, out, "Hub unreachable")
}
