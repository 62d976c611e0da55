package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math/rand/v2"
	"net/http"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	devsync "cornerbook/sync"
)

// TestBadInputMatrix sends bad input to every face of the product — the
// HTTP API (push, pull, join, joins, login, setup, flags, series, plan
// checks, history, unknown routes), `cornerbook import` and the command
// line (bad flags, missing FILE, bad day, locked folder) — and checks
// that each gets a clear error: the HTTP status, error code and field, or
// the exit code and a message naming the flag, field or line. An export
// before and after proves nothing stored changed.
//
// The real binary runs every command; the API cases go to `cornerbook
// serve` as a subprocess on 127.0.0.1, as the laptop (plain-HTTP port)
// and as paired devices (HTTPS, a LAN Host name and their tokens).
func TestBadInputMatrix(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the cornerbook binary")
	}
	bin := cornerbookBin(t)
	data := filepath.Join(t.TempDir(), "camp")
	files := t.TempDir()
	write := func(name, content string) string {
		p := filepath.Join(files, name)
		require.NoError(t, os.WriteFile(p, []byte(content), 0o600))
		return p
	}
	run := func(stdin string, args ...string) (int, string, string) {
		cmd := exec.Command(bin, args...)
		cmd.Stdin = strings.NewReader(stdin)
		var out, errb bytes.Buffer
		cmd.Stdout, cmd.Stderr = &out, &errb
		err := cmd.Run()
		code := 0
		if ee, ok := err.(*exec.ExitError); ok {
			code = ee.ExitCode()
		} else {
			require.NoError(t, err)
		}
		return code, out.String(), errb.String()
	}

	// A small camp, imported through the real command.
	rng := rand.New(rand.NewPCG(9, 9))
	today := time.Now()
	aths := newAthletes(2, "seed-laptop", today, rng)
	seed := &sim{role: "athlete", athlete: aths[0].ID, id: "seed-phone"}
	seed.backlog(today, 5, rng)
	var jl bytes.Buffer
	for _, r := range aths {
		b, _ := json.Marshal(r)
		jl.Write(append(b, '\n'))
	}
	for _, m := range seed.muts {
		b, _ := json.Marshal(m.Record)
		jl.Write(append(b, '\n'))
	}
	code, out, errs := run("", "import", "--data", data, write("seed.jsonl", jl.String()))
	require.Equal(t, 0, code, errs)
	require.Contains(t, out, fmt.Sprintf("imported %d records", 2+len(seed.muts)))
	export := func() string {
		code, out, errs := run("", "export", "--data", data)
		require.Equal(t, 0, code, errs)
		return out
	}
	before := export()
	require.Equal(t, 2+len(seed.muts), strings.Count(before, "\n"))

	good := func(mod func(r map[string]any)) string {
		b, _ := json.Marshal(seed.muts[0].Record)
		var r map[string]any
		json.Unmarshal(b, &r)
		r["id"] = newID()
		mod(r)
		b, _ = json.Marshal(r)
		return string(b)
	}
	longLine := `{"id":"` + newID() + `","kind":"note","body":{"text":"` + strings.Repeat("x", 1<<20) + `"}}`

	// Each case: exit code and the words the message must hold.
	type cliCase struct {
		name  string
		args  []string
		stdin string
		code  int
		want  []string
		// gap marks a message the product does not give yet (reported,
		// not failed); the exit code is still checked.
		gap bool
		// soft are words a clearer message would hold (reported, not
		// failed) on top of want.
		soft []string
	}
	f := func(name, content string) string { return write(name, content) }
	cli := []cliCase{
		{"import: FILE does not exist", []string{"import", "--data", data, filepath.Join(files, "nope.jsonl")}, "", 1, []string{"nope.jsonl", "no such file"}, false, nil},
		{"import: no FILE", []string{"import", "--data", data}, "", 2, []string{"import takes one FILE"}, false, nil},
		{"import: two FILEs", []string{"import", "--data", data, "a", "b"}, "", 2, []string{"import takes one FILE"}, false, nil},
		{"import: broken JSON on line 2", []string{"import", "--data", data, f("b1.jsonl", good(func(map[string]any) {})+"\n{\"id\":\n")}, "", 1, []string{"nothing was imported", "line 2", "ends in the middle of a record"}, false, nil},
		{"import: unknown field", []string{"import", "--data", data, f("b2.jsonl", good(func(r map[string]any) { r["colour"] = "red" }))}, "", 1, []string{"line 1: colour", "not a field"}, false, nil},
		{"import: repeated id", []string{"import", "--data", data, f("b3.jsonl", strings.Repeat(good(func(r map[string]any) { r["id"] = aths[1].ID + "" }), 1)+"\n"+good(func(r map[string]any) { r["id"] = aths[1].ID })+"\n")}, "", 1, []string{"line 2: id", "repeats the id of line 1"}, false, nil},
		{"import: mass out of range", []string{"import", "--data", data, f("b4.jsonl", good(func(r map[string]any) { r["body"] = map[string]any{"mass_kg": 900} }))}, "", 1, []string{"line 1: body.mass_kg", "between 25 and 250 kg"}, false, nil},
		{"import: kind missing", []string{"import", "--data", data, f("b5.jsonl", good(func(r map[string]any) { delete(r, "kind") }))}, "", 1, []string{"line 1: kind", "required"}, false, nil},
		{"import: unknown kind", []string{"import", "--data", data, f("b6.jsonl", good(func(r map[string]any) { r["kind"] = "sparring" }))}, "", 1, []string{"line 1: kind", `"sparring" is not a record kind`}, false, nil},
		{"import: bad day", []string{"import", "--data", data, f("b7.jsonl", good(func(r map[string]any) { r["day"] = "2026-02-30" }))}, "", 1, []string{"line 1: day", "2026-02-30"}, false, nil},
		{"import: day in the future", []string{"import", "--data", data, f("b8.jsonl", good(func(r map[string]any) { r["day"] = today.AddDate(0, 0, 9).Format(time.DateOnly) }))}, "", 1, []string{"line 1: day", "after today"}, false, nil},
		{"import: id not a UUID", []string{"import", "--data", data, f("b9.jsonl", good(func(r map[string]any) { r["id"] = "record-1" }))}, "", 1, []string{"line 1: id", "record-1"}, false, nil},
		{"import: not UTF-8", []string{"import", "--data", data, f("b10.jsonl", "{\"id\":\"\xff\xfe\"}\n")}, "", 1, []string{"line 1", "not valid UTF-8"}, false, nil},
		{"import: line over 1 MiB", []string{"import", "--data", data, f("b11.jsonl", longLine+"\n")}, "", 1, []string{"line 1", "longer than 1024 KiB"}, false, nil},
		{"import: one bad line among good ones imports nothing", []string{"import", "--data", data, f("b12.jsonl", good(func(map[string]any) {})+"\n"+good(func(r map[string]any) { r["body"] = map[string]any{"sleep": 9} })+"\n")}, "", 1, []string{"nothing was imported", "line 2: body.sleep", "1 to 5"}, false, nil},
		{"import: bad line from standard input", []string{"import", "--data", data, "-"}, "not json\n", 1, []string{"line 1", "not valid JSON"}, false, nil},
		{"unknown command", []string{"improt", "--data", data}, "", 2, []string{`"improt" is not a command`, "Usage"}, false, nil},
		{"serve: unknown flag", []string{"serve", "--port", "80"}, "", 2, []string{"flag provided but not defined: -port"}, false, nil},
		{"serve: argument", []string{"serve", "--data", data, "now"}, "", 2, []string{"serve takes no arguments"}, false, nil},
		{"serve: address that cannot be listened on", []string{"serve", "--data", data, "--addr", "127.0.0.1:99999", "--http-addr", "127.0.0.1:0"}, "", 1, []string{"listen on 127.0.0.1:99999"}, false, nil},
		{"flags: --day missing", []string{"flags", "--data", data}, "", 1, []string{"--day must be a calendar day YYYY-MM-DD"}, false, nil},
		{"flags: --day not a day", []string{"flags", "--data", data, "--day", "2026-02-30"}, "", 1, []string{"--day", `"2026-02-30"`}, false, nil},
		{"flags: --day in another format", []string{"flags", "--data", data, "--day", "01/12/2026"}, "", 1, []string{"--day", "YYYY-MM-DD"}, false, nil},
		{"flags: unknown flag", []string{"flags", "--data", data, "--date", "2026-11-01"}, "", 2, []string{"flag provided but not defined: -date"}, false, nil},
		{"export: unknown kind", []string{"export", "--data", data, "--kind", "sparring"}, "", 1, []string{`--kind "sparring" is not a record kind`}, false, nil},
		{"export: --csv without --kind", []string{"export", "--data", data, "--csv"}, "", 1, []string{"--csv needs --kind"}, false, nil},
		{"export: stray argument", []string{"export", "--data", data, "all"}, "", 2, []string{"not complete or has extra words", "cornerbook export  --data DIR"}, false, nil},
		{"backup: no FILE", []string{"backup", "--data", data}, "", 2, []string{"not complete or has extra words", "cornerbook backup  --data DIR FILE"}, false, nil},
		{"restore: FILE does not exist", []string{"restore", "--data", filepath.Join(files, "elsewhere"), filepath.Join(files, "missing.db")}, "", 1, []string{"missing.db"}, false, nil},
		{"restore: FILE is not a backup", []string{"restore", "--data", filepath.Join(files, "elsewhere"), f("not-a-backup.db", "hello")}, "", 1, []string{"not a usable Cornerbook backup"}, false, nil},
	}
	gaps := 0
	checkCLI := func(c cliCase) {
		code, out, errs := run(c.stdin, c.args...)
		msg := out + errs
		ok := assert.Equal(t, c.code, code, "%s: exit code (output %q)", c.name, msg)
		for _, w := range c.soft {
			if !strings.Contains(msg, w) {
				gaps++
				t.Logf("GAP %s: a clearer message would say %q; it was %q", c.name, w, strings.TrimSpace(msg))
			}
		}
		for _, w := range c.want {
			if !strings.Contains(msg, w) {
				if c.gap {
					gaps++
					t.Logf("GAP %s: the message does not say %q; it was %q", c.name, w, strings.TrimSpace(msg))
				} else {
					ok = false
					t.Errorf("%s: the message does not say %q; it was %q", c.name, w, strings.TrimSpace(msg))
				}
			}
		}
		if ok {
			t.Logf("ok  %-55s exit %d: %.160s", c.name, code, strings.ReplaceAll(strings.TrimSpace(msg), "\n", " | "))
		}
	}
	for _, c := range cli {
		checkCLI(c)
	}
	require.Equal(t, before, export(), "the command-line cases changed the store")

	// The hub runs; now the folder is locked for every other command.
	h := newProcHub(t, data)
	h.start()
	for _, c := range []cliCase{
		{"locked folder: export", []string{"export", "--data", data}, "", 1, []string{"in use by another cornerbook", "stop the running hub"}, false, nil},
		{"locked folder: import", []string{"import", "--data", data, f("ok.jsonl", good(func(map[string]any) {}))}, "", 1, []string{"in use by another cornerbook"}, false, nil},
		{"locked folder: flags", []string{"flags", "--data", data, "--day", today.Format(time.DateOnly)}, "", 1, []string{"in use by another cornerbook"}, false, nil},
		{"running hub: backup asks it for a hot copy", []string{"backup", "--data", data, filepath.Join(files, "b.db")}, "", 0, []string{"backup written from the running hub"}, false, nil},
		{"locked folder: a second hub", []string{"serve", "--data", data, "--addr", "127.0.0.1:0", "--http-addr", "127.0.0.1:0"}, "", 1, []string{"in use by another cornerbook"}, false, nil},
	} {
		checkCLI(c)
	}

	// Paired devices: an athlete's phone and a staff tablet.
	ctx := context.Background()
	laptop := h.client()
	phone, err := laptop.join(ctx, "athlete", aths[0].ID, "matrix phone")
	require.NoError(t, err)
	tablet, err := laptop.join(ctx, "staff", "", "matrix tablet")
	require.NoError(t, err)
	var used joinCode
	require.NoError(t, laptop.do(ctx, coach, "POST", "/api/joins", map[string]string{"role": "staff"}, &used))
	require.NoError(t, laptop.do(ctx, coach, "POST", "/api/join", map[string]string{"code": used.Code, "name": "first"}, nil))
	hu, _ := url.Parse(h.URL())
	lan, err := newClient(hu, h.caPEM(), 4, DefaultDeviceHost)
	require.NoError(t, err)

	// raw sends one request: as the laptop (plain-HTTP port, loopback
	// Host) or as a device (HTTPS, LAN Host, its token if any).
	type who struct {
		laptop bool
		token  string
	}
	asLaptop := who{laptop: true}
	asPhone, asTablet := who{token: phone.Token}, who{token: tablet.Token}
	asStranger, asForged := who{}, who{token: "not-a-token"}
	raw := func(w who, method, path, body string) (int, devsync.ErrorBody, []byte) {
		c := laptop
		if !w.laptop {
			c = lan
		}
		req, err := http.NewRequest(method, c.base.String()+path, strings.NewReader(body))
		require.NoError(t, err)
		if !w.laptop {
			req.Host = DefaultDeviceHost
			if w.token != "" {
				req.Header.Set("Authorization", "Bearer "+w.token)
			}
		}
		resp, err := c.http.Do(req)
		require.NoError(t, err)
		defer resp.Body.Close()
		b, _ := io.ReadAll(resp.Body)
		var e devsync.ErrorBody
		json.Unmarshal(b, &e)
		return resp.StatusCode, e, b
	}

	// Records for push cases, numbered by the pushing device.
	laptopN := uint64(0)
	rec := func(dev string, mod func(r map[string]any)) map[string]any {
		b, _ := json.Marshal(seed.muts[0].Record)
		var r map[string]any
		json.Unmarshal(b, &r)
		r["id"], r["device"] = newID(), dev
		if mod != nil {
			mod(r)
		}
		return r
	}
	pushBody := func(dev string, recs ...map[string]any) string {
		var muts []map[string]any
		for _, r := range recs {
			laptopN++
			op := "upsert"
			if r["deleted"] == true {
				op = "delete"
			}
			muts = append(muts, map[string]any{"n": laptopN, "op": op, "record": r})
		}
		b, _ := json.Marshal(map[string]any{"device": dev, "mutations": muts})
		return string(b)
	}
	pushOp := func(dev, op string, r map[string]any) string {
		laptopN++
		return mustS(map[string]any{"device": dev, "mutations": []any{map[string]any{"n": laptopN, "op": op, "record": r}}})
	}
	const lapDev = "matrix-laptop"
	future := time.Now().Add(2 * time.Hour).UnixMilli()
	many := make([]map[string]any, 501)
	for i := range many {
		many[i] = map[string]any{"n": i + 1, "op": "upsert", "record": map[string]any{"id": newID()}}
	}
	manyBody, _ := json.Marshal(map[string]any{"device": lapDev, "mutations": many})
	huge := `{"device":"` + lapDev + `","mutations":[{"n":1,"op":"upsert","record":{"id":"x","body":{"text":"` + strings.Repeat("y", 1<<20) + `"}}}]}`
	ath0 := aths[0].ID
	otherDay := today.AddDate(0, 0, -1).Format(time.DateOnly)

	type apiCase struct {
		name         string
		who          who
		method, path string
		body         string
		status       int
		code, field  string
		reason       string // words the reason must hold ("" = any)
		// For a 200 push: the one rejection expected.
		rejCode, rejField string
	}
	api := []apiCase{
		// push: the request as a whole
		{"push: body is not JSON", asLaptop, "POST", "/api/push", `{"device":`, 400, "BAD_REQUEST", "body", "", "", ""},
		{"push: empty body", asLaptop, "POST", "/api/push", ``, 400, "BAD_REQUEST", "body", "is empty", "", ""},
		{"push: two JSON values", asLaptop, "POST", "/api/push", `{"device":"d","mutations":[]} {}`, 400, "BAD_REQUEST", "body", "more than one JSON value", "", ""},
		{"push: unknown field", asLaptop, "POST", "/api/push", `{"device":"d","mutations":[],"extra":1}`, 400, "BAD_REQUEST", "extra", "not a known field", "", ""},
		{"push: device missing", asLaptop, "POST", "/api/push", `{"mutations":[]}`, 400, "BAD_REQUEST", "device", "required", "", ""},
		{"push: device too long", asLaptop, "POST", "/api/push", `{"device":"` + strings.Repeat("d", 101) + `","mutations":[]}`, 400, "BAD_REQUEST", "device", "longer than 100", "", ""},
		{"push: mutations not a list", asLaptop, "POST", "/api/push", `{"device":"d","mutations":{}}`, 400, "BAD_REQUEST", "mutations", "a list", "", ""},
		{"push: n is text", asLaptop, "POST", "/api/push", `{"device":"d","mutations":[{"n":"one","op":"upsert","record":{}}]}`, 400, "BAD_REQUEST", "mutations[0].n", "whole number", "", ""},
		{"push: more than 500 mutations", asLaptop, "POST", "/api/push", string(manyBody), 413, "TOO_LARGE", "mutations", "at most 500", "", ""},
		{"push: body over 1 MiB", asLaptop, "POST", "/api/push", huge, 413, "TOO_LARGE", "body", "larger than 1024 KiB", "", ""},
		{"push: not UTF-8", asLaptop, "POST", "/api/push", "{\"device\":\"\xff\"}", 400, "BAD_REQUEST", "body", "UTF-8", "", ""},
		{"push: n is 0", asLaptop, "POST", "/api/push", `{"device":"d0","mutations":[{"n":0,"op":"upsert","record":{}}]}`, 400, "BAD_REQUEST", "mutations[0].n", "1 or more", "", ""},
		{"push: n not increasing", asLaptop, "POST", "/api/push", `{"device":"d0","mutations":[{"n":5,"op":"upsert","record":{}},{"n":5,"op":"upsert","record":{}}]}`, 400, "BAD_REQUEST", "mutations[1].n", "strictly increasing", "", ""},
		{"push: stamp hours ahead of the hub", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) { r["stamp"] = map[string]any{"l": future, "c": 0} })), 409, "CLOCK_SKEW", "mutations[0].record.stamp.l", "ahead of the hub's clock", "", ""},
		// push: one bad record, answered 200 with its rejection
		{"push: mass out of range", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) { r["body"] = map[string]any{"mass_kg": 500} })), 200, "", "", "", "VALIDATION", "body.mass_kg"},
		{"push: wellness item out of scale", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) { r["body"] = map[string]any{"fatigue": 0} })), 200, "", "", "", "VALIDATION", "body.fatigue"},
		{"push: unknown kind", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) { r["kind"] = "sparring" })), 200, "", "", "", "VALIDATION", "kind"},
		{"push: id not a UUID", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) { r["id"] = "abc" })), 200, "", "", "", "VALIDATION", "id"},
		{"push: impossible day", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) { r["day"] = "2026-13-40" })), 200, "", "", "", "VALIDATION", "day"},
		{"push: day next week", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) { r["day"] = today.AddDate(0, 0, 7).Format(time.DateOnly) })), 200, "", "", "", "VALIDATION", "day"},
		{"push: at not RFC 3339", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) { r["at"] = "7am" })), 200, "", "", "", "VALIDATION", "at"},
		{"push: athlete missing", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) { delete(r, "athlete") })), 200, "", "", "", "VALIDATION", "athlete"},
		{"push: record names another device", asLaptop, "POST", "/api/push", pushBody(lapDev, rec("someone-else", nil)), 200, "", "", "", "VALIDATION", "device"},
		{"push: upsert carrying a delete", asLaptop, "POST", "/api/push", pushOp(lapDev, "upsert", rec(lapDev, func(r map[string]any) { r["deleted"] = true })), 200, "", "", "", "VALIDATION", "op"},
		{"push: unknown op", asLaptop, "POST", "/api/push", pushOp(lapDev, "merge", rec(lapDev, nil)), 200, "", "", "", "VALIDATION", "op"},
		{"push: another kind under an existing id", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) {
			r["id"], r["kind"], r["body"] = seed.muts[0].Record.ID, "note", map[string]any{"text": "x"}
		})), 200, "", "", "", "VALIDATION", "kind"},
		{"push: note without text", asLaptop, "POST", "/api/push", pushBody(lapDev, rec(lapDev, func(r map[string]any) { r["kind"], r["body"] = "note", map[string]any{"text": " "} })), 200, "", "", "", "VALIDATION", "body.text"},
		// push: rights of paired devices
		{"push: no token from the Wi-Fi", asStranger, "POST", "/api/push", `{"device":"x","mutations":[]}`, 401, "UNAUTHORIZED", "", "not paired", "", ""},
		{"push: forged token", asForged, "POST", "/api/push", `{"device":"x","mutations":[]}`, 401, "UNAUTHORIZED", "", "", "", ""},
		{"push: phone pushes as another device", asPhone, "POST", "/api/push", `{"device":"` + tablet.Device.ID + `","mutations":[]}`, 403, "FORBIDDEN", "device", "does not match", "", ""},
		{"push: phone writes a jump", asPhone, "POST", "/api/push", `{"device":"` + phone.Device.ID + `","mutations":[{"n":1,"op":"upsert","record":` + mustS(rec(phone.Device.ID, func(r map[string]any) {
			r["kind"], r["body"] = "jump", map[string]any{"heights_cm": []float64{40}}
		})) + `}]}`, 200, "", "", "", "FORBIDDEN", "kind"},
		{"push: phone writes another athlete's check-in", asPhone, "POST", "/api/push", `{"device":"` + phone.Device.ID + `","mutations":[{"n":2,"op":"upsert","record":` + mustS(rec(phone.Device.ID, func(r map[string]any) { r["athlete"] = aths[1].ID })) + `}]}`, 200, "", "", "", "FORBIDDEN", "athlete"},
		{"push: tablet writes an athlete record", asTablet, "POST", "/api/push", `{"device":"` + tablet.Device.ID + `","mutations":[{"n":1,"op":"upsert","record":` + mustS(func() map[string]any {
			r := rec(tablet.Device.ID, nil)
			id := newID()
			r["id"], r["athlete"], r["kind"], r["body"] = id, id, "athlete", map[string]any{"name": "X"}
			delete(r, "day")
			return r
		}()) + `}]}`, 200, "", "", "", "FORBIDDEN", "kind"},
		{"push: tablet rewrites an existing athlete record", asTablet, "POST", "/api/push", `{"device":"` + tablet.Device.ID + `","mutations":[{"n":2,"op":"upsert","record":` + mustS(rec(tablet.Device.ID, func(r map[string]any) {
			r["id"], r["kind"], r["body"] = aths[1].ID, "athlete", map[string]any{"name": "Y"}
		})) + `}]}`, 200, "", "", "", "FORBIDDEN", "kind"},
		// pull
		{"pull: since is text", asLaptop, "GET", "/api/pull?since=abc", "", 400, "BAD_REQUEST", "since", "whole number", "", ""},
		{"pull: since negative", asLaptop, "GET", "/api/pull?since=-1", "", 400, "BAD_REQUEST", "since", "", "", ""},
		{"pull: limit 0", asLaptop, "GET", "/api/pull?limit=0", "", 400, "BAD_REQUEST", "limit", "between 1 and 10000", "", ""},
		{"pull: limit over 10000", asLaptop, "GET", "/api/pull?limit=20000", "", 400, "BAD_REQUEST", "limit", "between 1 and 10000", "", ""},
		{"pull: no token from the Wi-Fi", asStranger, "GET", "/api/pull", "", 401, "UNAUTHORIZED", "", "", "", ""},
		// joins and join
		{"joins: unknown role", asLaptop, "POST", "/api/joins", `{"role":"boss"}`, 400, "BAD_REQUEST", "role", "coach, staff or athlete", "", ""},
		{"joins: athlete code without an athlete", asLaptop, "POST", "/api/joins", `{"role":"athlete"}`, 400, "BAD_REQUEST", "athlete", "choose which", "", ""},
		{"joins: athlete not in the camp", asLaptop, "POST", "/api/joins", `{"role":"athlete","athlete":"` + newID() + `"}`, 400, "BAD_REQUEST", "athlete", "no athlete with this id", "", ""},
		{"joins: staff code with an athlete", asLaptop, "POST", "/api/joins", `{"role":"staff","athlete":"` + ath0 + `"}`, 400, "BAD_REQUEST", "athlete", "only athlete devices", "", ""},
		{"joins: from a staff tablet", asTablet, "POST", "/api/joins", `{"role":"coach"}`, 403, "FORBIDDEN", "", "only a coach's device", "", ""},
		{"join: unknown code", asStranger, "POST", "/api/join", `{"code":"ZZZZ-ZZZZ","name":"phone"}`, 404, "NOT_FOUND", "", "not recognised", "", ""},
		{"join: used code", asStranger, "POST", "/api/join", `{"code":"` + used.Code + `","name":"phone"}`, 410, "GONE", "code", "already been used", "", ""},
		{"join: no device name", asStranger, "POST", "/api/join", `{"code":"` + used.Code + `","name":"  "}`, 400, "BAD_REQUEST", "name", "give this device a name", "", ""},
		{"join: device name too long", asStranger, "POST", "/api/join", `{"code":"ABCD-EFGH","name":"` + strings.Repeat("n", 61) + `"}`, 400, "BAD_REQUEST", "name", "at most 60", "", ""},
		{"join: unknown field", asStranger, "POST", "/api/join", `{"code":"ABCD-EFGH","name":"p","role":"coach"}`, 400, "BAD_REQUEST", "role", "not a known field", "", ""},
		// setup and login (no passphrase set on this hub)
		{"login: no passphrase set yet", asStranger, "POST", "/api/login", `{"passphrase":"correct horse battery"}`, 409, "CONFLICT", "", "no coach passphrase", "", ""},
		{"setup: passphrase too short", asLaptop, "POST", "/api/setup", `{"passphrase":"abc"}`, 400, "BAD_REQUEST", "passphrase", "at least", "", ""},
		{"setup: passphrase only spaces", asLaptop, "POST", "/api/setup", `{"passphrase":"              "}`, 400, "BAD_REQUEST", "passphrase", "only spaces", "", ""},
		{"setup: wrong setup code from the Wi-Fi", asStranger, "POST", "/api/setup", `{"passphrase":"a long enough phrase","code":"WRONG-CODE"}`, 401, "UNAUTHORIZED", "", "setup code is wrong", "", ""},
		{"setup: body not JSON", asLaptop, "POST", "/api/setup", `passphrase=x`, 400, "BAD_REQUEST", "body", "not valid JSON", "", ""},
		// flags, series, plans, history, routes
		{"flags: impossible day", asLaptop, "GET", "/api/flags?day=2026-02-30", "", 400, "BAD_REQUEST", "day", "YYYY-MM-DD", "", ""},
		{"flags: day in another format", asLaptop, "GET", "/api/flags?day=30.11.2026", "", 400, "BAD_REQUEST", "day", "YYYY-MM-DD", "", ""},
		{"flags: phone asks for another athlete", asPhone, "GET", "/api/flags?athlete=" + aths[1].ID, "", 403, "FORBIDDEN", "athlete", "its own athlete", "", ""},
		{"series: bad from", asLaptop, "GET", "/api/athletes/" + ath0 + "/series?from=yesterday", "", 400, "BAD_REQUEST", "from", "YYYY-MM-DD", "", ""},
		{"series: to before from", asLaptop, "GET", "/api/athletes/" + ath0 + "/series?from=2026-11-10&to=2026-11-01", "", 400, "BAD_REQUEST", "to", "before from", "", ""},
		{"series: range too long", asLaptop, "GET", "/api/athletes/" + ath0 + "/series?from=2020-01-01&to=" + otherDay, "", 400, "BAD_REQUEST", "to", "at most", "", ""},
		{"series: phone asks for another athlete", asPhone, "GET", "/api/athletes/" + aths[1].ID + "/series", "", 403, "FORBIDDEN", "id", "its own athlete", "", ""},
		{"plan default: bad camp start", asLaptop, "GET", "/api/plan/default?camp_start=soon&bout_day=2026-12-24", "", 400, "BAD_REQUEST", "camp_start", "YYYY-MM-DD", "", ""},
		{"plan default: bout before camp", asLaptop, "GET", "/api/plan/default?camp_start=2026-12-24&bout_day=2026-12-01", "", 400, "BAD_REQUEST", "bout_day", "not after the camp start", "", ""},
		{"plan check: body not JSON", asLaptop, "POST", "/api/plan/check", `{"bout":`, 400, "BAD_REQUEST", "body", "", "", ""},
		{"plan check: unknown field", asLaptop, "POST", "/api/plan/check", `{"bout":{},"when":1}`, 400, "BAD_REQUEST", "when", "not a known field", "", ""},
		{"history: unknown record", asLaptop, "GET", "/api/records/" + newID() + "/history", "", 404, "NOT_FOUND", "id", "no record", "", ""},
		{"unknown API route", asLaptop, "GET", "/api/nothing", "", 404, "NOT_FOUND", "", "no such API route", "", ""},
		{"devices: list from a phone", asPhone, "GET", "/api/devices", "", 403, "FORBIDDEN", "", "only a coach's device", "", ""},
		{"backup download from a tablet", asTablet, "GET", "/api/backup", "", 403, "FORBIDDEN", "", "only a coach's device", "", ""},
	}
	for _, c := range api {
		st, e, body := raw(c.who, c.method, c.path, c.body)
		ok := assert.Equal(t, c.status, st, "%s: status (answer %.300s)", c.name, body)
		if c.status != 200 {
			ok = assert.Equal(t, c.code, e.Code, "%s: code (answer %.300s)", c.name, body) && ok
			ok = assert.Equal(t, c.field, e.Field, "%s: field (answer %.300s)", c.name, body) && ok
			ok = assert.Contains(t, e.Reason, c.reason, "%s: reason", c.name) && ok
			if e.Reason == "" {
				ok = false
				t.Errorf("%s: the answer gives no reason: %.300s", c.name, body)
			}
			if ok {
				t.Logf("ok  %-55s %d %s %s: %.120s", c.name, st, e.Code, e.Field, e.Reason)
			}
			continue
		}
		var res devsync.PushResponse
		require.NoError(t, json.Unmarshal(body, &res), c.name)
		if assert.Len(t, res.Rejected, 1, "%s: one rejection (answer %.300s)", c.name, body) {
			r := res.Rejected[0]
			ok = assert.Equal(t, c.rejCode, r.Code, "%s: rejection code (%s)", c.name, r.Reason) && ok
			ok = assert.Equal(t, c.rejField, r.Field, "%s: rejection field (%s)", c.name, r.Reason) && ok
			if r.Reason == "" {
				ok = false
				t.Errorf("%s: the rejection gives no reason", c.name)
			}
			if ok {
				t.Logf("ok  %-55s 200, rejected %s %s: %.120s", c.name, r.Code, r.Field, r.Reason)
			}
		}
		assert.Zero(t, res.Applied, "%s: nothing applied", c.name)
	}
	// The plan check explains a bad bout in its answer instead of refusing.
	st, _, body := raw(asLaptop, "POST", "/api/plan/check", `{"athlete":"`+ath0+`","bout":{"camp_start":"2026-11-01","bout_day":"2026-10-01","weigh_in":"x","weigh_in_type":"same_day","limit_kg":60,"start_mass_kg":64}}`)
	require.Equal(t, 200, st, "%s", body)
	var pc struct {
		Invalid string `json:"invalid"`
		Field   string `json:"field"`
	}
	require.NoError(t, json.Unmarshal(body, &pc))
	assert.NotEmpty(t, pc.Field, "plan check names the field of a bad bout: %s", body)
	assert.NotEmpty(t, pc.Invalid, "plan check gives the reason: %s", body)
	t.Logf("ok  %-55s 200, invalid %s: %.120s", "plan check: bout before camp start", pc.Field, pc.Invalid)

	h.stop()
	require.Equal(t, before, export(), "the bad input changed what is stored")
	n := len(cli) + 5 + len(api) + 1
	t.Logf("%d bad-input cases; %d message gaps reported above", n, gaps)
	assert.GreaterOrEqual(t, n, 50)
}

func mustS(v any) string {
	b, err := json.Marshal(v)
	if err != nil {
		panic(err)
	}
	return string(b)
}
