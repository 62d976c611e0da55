package main

import (
	"bytes"
	"context"
	"crypto/tls"
	"crypto/x509"
	"encoding/json"
	"fmt"
	"io"
	"log"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// runCmd runs one command line and returns its exit code and output.
func runCmd(t *testing.T, stdin string, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := Run(context.Background(), args, strings.NewReader(stdin), &out, &errb)
	return code, out.String(), errb.String()
}

// mustRunMain starts the hub on a free port in a temp folder.
func mustRunMain(t *testing.T, demo bool) *Main {
	t.Helper()
	m := NewMain()
	m.Config.Addr = "127.0.0.1:0"
	m.Config.HTTPAddr = "127.0.0.1:0"
	m.Config.DataDir = t.TempDir()
	m.Config.Demo = demo
	m.Stdout = io.Discard
	m.Log = log.New(io.Discard, "", 0)
	require.NoError(t, m.Run(context.Background()))
	t.Cleanup(func() { m.Close() })
	return m
}

// TestMain_DemoServesAppAndCamp: the demo hub answers with the app and the
// invented camp's athletes.
func TestMain_DemoServesAppAndCamp(t *testing.T) {
	m := mustRunMain(t, true)
	// The coach's own screen: plain HTTP on loopback serves the whole app.
	base := "http://" + m.Server.BootstrapAddr()
	resp, err := http.Get(base + "/")
	require.NoError(t, err)
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	assert.Equal(t, 200, resp.StatusCode)
	assert.Contains(t, string(body), "<html")

	// Pages are sized in bytes, so the demo camp takes several: follow them.
	athletes := 0
	for since, pages := uint64(0), 0; ; pages++ {
		require.Less(t, pages, 100, "the pull never ends")
		resp, err = http.Get(fmt.Sprintf("%s/api/pull?since=%d", base, since))
		require.NoError(t, err)
		var page struct {
			Records []struct{ Kind string }
			Next    uint64
			More    bool
		}
		require.NoError(t, json.NewDecoder(resp.Body).Decode(&page))
		resp.Body.Close()
		for _, r := range page.Records {
			if r.Kind == "athlete" {
				athletes++
			}
		}
		if !page.More {
			break
		}
		since = page.Next
	}
	assert.Equal(t, 5, athletes, "the demo camp has five invented athletes")
}

// TestCommands_LockedFolder: while a hub holds the folder, commands say so
// clearly instead of hanging.
func TestCommands_LockedFolder(t *testing.T) {
	m := mustRunMain(t, false)
	start := time.Now()
	code, _, stderr := runCmd(t, "", "export", "--data", m.Config.DataDir)
	assert.Equal(t, 1, code)
	assert.Contains(t, stderr, "in use by another cornerbook")
	assert.Less(t, time.Since(start), 10*time.Second)
}

// TestCommands_ExportImportRoundTrip: export → import into an empty folder
// → export gives identical output, and a second import stores nothing new.
func TestCommands_ExportImportRoundTrip(t *testing.T) {
	m := mustRunMain(t, true)
	dir := m.Config.DataDir
	require.NoError(t, m.Close())

	code, first, stderr := runCmd(t, "", "export", "--data", dir)
	require.Equal(t, 0, code, stderr)
	require.Greater(t, strings.Count(first, "\n"), 500)
	file := filepath.Join(t.TempDir(), "camp.jsonl")
	require.NoError(t, os.WriteFile(file, []byte(first), 0o600))

	fresh := filepath.Join(t.TempDir(), "fresh")
	code, out, stderr := runCmd(t, "", "import", "--data", fresh, file)
	require.Equal(t, 0, code, stderr)
	assert.Contains(t, out, "stored")
	code, second, _ := runCmd(t, "", "export", "--data", fresh)
	require.Equal(t, 0, code)
	assert.Equal(t, first, second, "export → import → export is identical")

	code, out, _ = runCmd(t, first, "import", "--data", fresh, "-")
	require.Equal(t, 0, code)
	assert.Contains(t, out, "0 stored", "importing the same file twice stores nothing new")

	code, csv, _ := runCmd(t, "", "export", "--data", fresh, "--kind", "checkin", "--csv")
	require.Equal(t, 0, code)
	header := strings.SplitN(csv, "\n", 2)[0]
	assert.Contains(t, header, "mass_kg (kg)", "units in the CSV header")
}

// TestCommands_BadImport: a file with bad lines imports nothing and names
// every bad line and field.
func TestCommands_BadImport(t *testing.T) {
	dir := t.TempDir()
	bad := `{"id":"0193a1b2-0000-7000-8000-000000000001","kind":"athlete","athlete":"0193a1b2-0000-7000-8000-000000000001","day":"2026-11-01","at":"2026-11-01T08:00:00Z","device":"d1","stamp":{"l":1,"c":0},"body":{"name":"A","units":"kg"}}
{"id":"0193a1b2-0000-7000-8000-000000000002","kind":"checkin","athlete":"0193a1b2-0000-7000-8000-000000000001","day":"2026-11-02","at":"2026-11-02T08:00:00Z","device":"d1","stamp":{"l":2,"c":0},"body":{"mass_kg":900}}
not json at all
`
	code, _, stderr := runCmd(t, bad, "import", "--data", dir, "-")
	assert.Equal(t, 1, code)
	assert.Contains(t, stderr, "line 2: body.mass_kg")
	assert.Contains(t, stderr, "line 3:")
	assert.Contains(t, stderr, "nothing was imported")
	code, out, _ := runCmd(t, "", "export", "--data", dir)
	assert.Equal(t, 0, code)
	assert.Empty(t, out, "nothing was stored")
}

func TestCommands_Usage(t *testing.T) {
	code, _, stderr := runCmd(t, "", "frobnicate")
	assert.Equal(t, 2, code)
	assert.Contains(t, stderr, "is not a command")
	code, _, stderr = runCmd(t, "", "flags", "--data", t.TempDir(), "--day", "2026-13-01")
	assert.Equal(t, 1, code)
	assert.Contains(t, stderr, "--day must be a calendar day")
	code, _, stderr = runCmd(t, "", "export", "--data", t.TempDir(), "--kind", "lunch")
	assert.Equal(t, 1, code)
	assert.Contains(t, stderr, "not a record kind")
}

// TestMain_HTTPSAndJoinPage: the app is served over HTTPS with a leaf the
// camp authority signs; a phone on the plain-HTTP port gets the join page
// with the authority's certificate and fingerprint; an unpaired phone is
// refused by the API.
func TestMain_HTTPSAndJoinPage(t *testing.T) {
	m := mustRunMain(t, false)
	pool := x509.NewCertPool()
	pool.AddCert(m.Certs.CA())
	client := &http.Client{Transport: &http.Transport{TLSClientConfig: &tls.Config{RootCAs: pool}}}
	resp, err := client.Get(m.Server.URL() + "/manifest.webmanifest")
	require.NoError(t, err, "the leaf verifies against the camp authority")
	resp.Body.Close()
	assert.Equal(t, 200, resp.StatusCode)

	// A phone reaches the hub by its LAN name: without a device token it is refused.
	phone := &http.Client{Transport: &http.Transport{TLSClientConfig: &tls.Config{RootCAs: pool, ServerName: "camp.local"}}}
	req, _ := http.NewRequest("GET", m.Server.URL()+"/api/pull?since=0", nil)
	req.Host = "camp.local"
	resp, err = phone.Do(req)
	require.NoError(t, err, "the leaf covers camp.local")
	resp.Body.Close()
	assert.Equal(t, 401, resp.StatusCode, "a phone without a device token is refused")

	// A phone (not loopback by Host) on the plain port: the join page.
	req, _ = http.NewRequest("GET", "http://"+m.Server.BootstrapAddr()+"/", nil)
	req.Host = "192.0.2.10:8080"
	resp, err = http.DefaultClient.Do(req)
	require.NoError(t, err)
	page, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	assert.Contains(t, string(page), m.Certs.Fingerprint())
	assert.Contains(t, string(page), "/ca.crt")

	req, _ = http.NewRequest("GET", "http://"+m.Server.BootstrapAddr()+"/ca.crt", nil)
	req.Host = "192.0.2.10:8080"
	resp, err = http.DefaultClient.Do(req)
	require.NoError(t, err)
	der, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	assert.Equal(t, "application/x-x509-ca-cert", resp.Header.Get("Content-Type"))
	assert.Equal(t, m.Certs.CADER(), der)

	// Anything else on the plain port goes to HTTPS.
	req, _ = http.NewRequest("GET", "http://"+m.Server.BootstrapAddr()+"/checkin", nil)
	req.Host = "192.0.2.10:8080"
	resp, err = (&http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}).Do(req)
	require.NoError(t, err)
	resp.Body.Close()
	assert.Equal(t, http.StatusTemporaryRedirect, resp.StatusCode)
	assert.True(t, strings.HasPrefix(resp.Header.Get("Location"), "https://192.0.2.10:"), resp.Header.Get("Location"))
}

// TestCommands_BackupRestore: backup → restore into an empty folder →
// export equals the original's; a corrupted backup is refused with a
// clear message and the folder it was meant for is unchanged.
func TestCommands_BackupRestore(t *testing.T) {
	m := mustRunMain(t, true)
	dir := m.Config.DataDir
	require.NoError(t, m.Close())
	backup := filepath.Join(t.TempDir(), "camp-backup.db")
	code, out, stderr := runCmd(t, "", "backup", "--data", dir, backup)
	require.Equal(t, 0, code, stderr)
	assert.Contains(t, out, "backup written")
	_, original, _ := runCmd(t, "", "export", "--data", dir)

	fresh := filepath.Join(t.TempDir(), "restored")
	code, out, stderr = runCmd(t, "", "restore", "--data", fresh, backup)
	require.Equal(t, 0, code, stderr)
	assert.Contains(t, out, "new epoch")
	_, restored, _ := runCmd(t, "", "export", "--data", fresh)
	assert.Equal(t, original, restored, "the restored folder holds exactly the original records")

	// Damage a copy of the backup: the restore is refused, nothing changes.
	raw, err := os.ReadFile(backup)
	require.NoError(t, err)
	for i := 4096; i < len(raw) && i < 4096*6; i += 97 {
		raw[i] ^= 0xff
	}
	bad := filepath.Join(t.TempDir(), "damaged.db")
	require.NoError(t, os.WriteFile(bad, raw, 0o600))
	code, _, stderr = runCmd(t, "", "restore", "--data", fresh, bad)
	assert.Equal(t, 1, code)
	assert.Contains(t, stderr, "not a usable Cornerbook backup")
	_, after, _ := runCmd(t, "", "export", "--data", fresh)
	assert.Equal(t, restored, after, "a refused restore changes nothing")

	half := filepath.Join(t.TempDir(), "cut.db")
	require.NoError(t, os.WriteFile(half, raw[:len(raw)/2], 0o600))
	code, _, stderr = runCmd(t, "", "restore", "--data", fresh, half)
	assert.Equal(t, 1, code)
	assert.Contains(t, stderr, "not a usable Cornerbook backup")
}
