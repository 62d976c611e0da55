package main

import (
	"bytes"
	"context"
	"encoding/json"
	"net/url"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	devsync "cornerbook/sync"
)

// recordsFor is how many records a run sends: one athlete per five
// devices; a phone logs 3 entries a day, a staff tablet 8.
func recordsFor(devices, days int) int {
	athletes := (devices + DevicesPerAthlete - 1) / DevicesPerAthlete
	phones := athletes
	return athletes + phones*3*days + (devices-phones)*8*days
}

// The load target (ENGINEERING.md, "Targets to measure"): 50 devices × 14
// days of backlog pushed at once, with zero errors and nothing lost or
// doubled, through the real protocol (join codes, device tokens checked
// by the hub, HTTPS with a fresh camp certificate) against a real hub
// on 127.0.0.1.
func TestLoad50DevicesFortnightBacklog(t *testing.T) {
	devices, days := 50, 14
	if testing.Short() {
		devices, days = 10, 3
	}
	var log bytes.Buffer
	rep, err := Run(context.Background(), Config{Self: true, SelfTLS: true, Devices: devices, Days: days, Batch: DefaultBatch,
		Timeout: 90 * time.Second, DeviceHost: DefaultDeviceHost, Seed: 1, Log: &log})
	require.NoError(t, err, log.String())
	var text bytes.Buffer
	rep.WriteText(&text)
	t.Log("\n" + text.String())

	assert.True(t, rep.OK(), "the run must be clean")
	assert.Zero(t, rep.Errors)
	assert.Zero(t, rep.Rejected)
	assert.Equal(t, recordsFor(devices, days), rep.Records)
	assert.Equal(t, rep.Records, rep.Acked, "every record acknowledged")
	assert.Equal(t, rep.Records, rep.Check.Stored, "every record pulled back")
	assert.Zero(t, rep.Check.Missing)
	assert.Zero(t, rep.Check.Duplicates)
	assert.Zero(t, rep.Check.Mismatched, "stored bodies are the hub's canonical form of what was sent")
	assert.Equal(t, (devices+4)/5, rep.PhoneViews, "each athlete's phone pulled exactly its own records")
}

// Small batches: each device's backlog spans many pushes, acknowledged in
// order, over plain HTTP.
func TestLoadManySmallBatches(t *testing.T) {
	rep, err := Run(context.Background(), Config{Self: true, SelfTLS: false, Devices: 12, Days: 7, Batch: 9,
		Timeout: time.Minute, DeviceHost: DefaultDeviceHost, Seed: 2})
	require.NoError(t, err)
	assert.True(t, rep.OK(), "%+v", rep)
	assert.Equal(t, recordsFor(12, 7), rep.Acked)
	assert.Greater(t, rep.Pushes, 12*5, "backlogs took several pushes each")
}

// The check can fail: a missing, a doubled, a changed and a foreign
// record are each counted.
func TestCompareFindsEveryKindOfDamage(t *testing.T) {
	mk := func(id, dev, body string) devsync.Record {
		return devsync.Record{ID: id, Kind: "note", Athlete: "a", Day: "2026-11-01", At: "2026-11-01T08:00:00Z",
			Device: dev, Stamp: devsync.HLC{L: 1}, Body: json.RawMessage(body)}
	}
	want := map[string]devsync.Record{
		"1": mk("1", "d", `{"text":"a"}`), "2": mk("2", "d", `{"text":"b"}`), "3": mk("3", "d", `{"text":"c"}`),
	}
	ours := map[string]bool{"d": true}
	pulled := []devsync.Record{
		want["1"], want["1"], // doubled
		mk("2", "d", `{"text":"B"}`), // changed
		mk("9", "d", `{"text":"?"}`), // never sent
		mk("8", "other", `{}`),       // another device's: ignored
	} // "3" missing
	c := compare(pulled, want, ours)
	assert.Equal(t, Check{Stored: 3, Missing: 1, Duplicates: 1, Mismatched: 1, Unexpected: 1}, Check{
		Stored: c.Stored, Missing: c.Missing, Duplicates: c.Duplicates, Mismatched: c.Mismatched, Unexpected: c.Unexpected})
	assert.False(t, c.OK())
	assert.True(t, compare([]devsync.Record{want["1"], want["2"], want["3"]}, want, ours).OK())
}

// Only a hub on this machine is ever contacted.
func TestRefusesAnyHostButLoopback(t *testing.T) {
	for _, u := range []string{"http://10.0.0.5:8443", "https://192.168.1.20:8443", "http://localhost:8080",
		"http://camp.local:8080", "http://[2001:db8::1]:8443", "ftp://127.0.0.1:21", "http://127.0.0.1"} {
		_, err := loopbackURL(u)
		assert.Error(t, err, u)
	}
	for _, u := range []string{"http://127.0.0.1:8080", "https://127.0.0.1:8443/", "http://[::1]:8080"} {
		_, err := loopbackURL(u)
		assert.NoError(t, err, u)
	}
	// The dialer refuses before any packet leaves, whatever the request says.
	base, _ := url.Parse("http://127.0.0.1:1")
	c, err := newClient(base, nil, 1, "")
	require.NoError(t, err)
	_, err = c.http.Get("http://192.0.2.1:80/api/status")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "not a loopback address")
}

func TestCommandLine(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--url", "http://10.1.2.3:8443"}, "only talks to a hub on this machine"},
		{[]string{"--devices", "0"}, "--devices must be between 1 and 1000"},
		{[]string{"--days", "-1"}, "--days must be between 1 and 400"},
		{[]string{"--batch", "201"}, "--batch must be between 1 and 200"},
		{[]string{"--timeout", "0s"}, "--timeout must be positive"},
		{[]string{"--devices", "ten"}, `invalid value "ten" for flag -devices`},
		{[]string{"--nonsense"}, "flag provided but not defined: -nonsense"},
		{[]string{"extra"}, `takes no arguments; got ["extra"]`},
	} {
		var out, errb bytes.Buffer
		code := cli(context.Background(), c.args, &out, &errb)
		assert.Equal(t, 2, code, "%v", c.args)
		assert.Contains(t, errb.String(), c.want, "%v", c.args)
	}

	var out, errb bytes.Buffer
	code := cli(context.Background(), []string{"--self", "--devices", "6", "--days", "2", "--json"}, &out, &errb)
	require.Equal(t, 0, code, errb.String())
	var rep Report
	require.NoError(t, json.Unmarshal(out.Bytes(), &rep))
	assert.True(t, rep.OK())
	assert.Equal(t, recordsFor(6, 2), rep.Records)
	assert.True(t, strings.HasPrefix(rep.URL, "https://127.0.0.1:"))
}
