package server_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	devsync "cornerbook/sync"
)

// seeded returns a hub holding one athlete and one check-in, and the athlete.
func seeded(t *testing.T) (*hub, devsync.Record) {
	h := newHub(t)
	a := h.athlete("Test Fighter", "kg")
	c := h.rec("checkin", a.ID, "2026-11-19", map[string]any{"mass_kg": 70.2, "fatigue": 3})
	resp := h.push("phone-1", 1, a, c)
	require.Equal(t, 2, resp.Applied, "rejected: %+v", resp.Rejected)
	return h, a
}

func reqBody(t *testing.T, device string, muts ...devsync.Mutation) []byte {
	b, err := json.Marshal(devsync.PushRequest{Device: device, Mutations: muts})
	require.NoError(t, err)
	return b
}

// TestPush_BadRequests: a push that is refused as a whole names the field
// and changes nothing that is stored.
func TestPush_BadRequests(t *testing.T) {
	h, a := seeded(t)
	good := h.rec("checkin", a.ID, "2026-11-20", map[string]any{"mass_kg": 70.0})
	okMut := devsync.Mutation{N: 10, Op: "upsert", Record: good}
	future := good
	future.Stamp.L = fixedNow.Add(2 * time.Hour).UnixMilli()
	second := okMut
	second.N = 9
	huge := good
	huge.Gen = devsync.MaxExact + 1 // 2^53: a JavaScript number cannot tell it from 2^53 + 1

	cases := []struct {
		name   string
		body   []byte
		status int
		code   string
		field  string
	}{
		{"malformed JSON", []byte(`{"device": "phone-1", "mutations": [`), 400, "BAD_REQUEST", "body"},
		{"invalid UTF-8", append([]byte(`{"device": "phone-1`), 0xff, 0xfe, '"', '}'), 400, "BAD_REQUEST", "body"},
		{"oversized body", append(append([]byte(`{"device":"phone-1","mutations":[],"x":"`), bytes.Repeat([]byte("a"), devsync.MaxPushBytes+10)...), '"', '}'), 413, "TOO_LARGE", "body"},
		{"empty body", nil, 400, "BAD_REQUEST", "body"},
		{"device of the wrong type", []byte(`{"device": 5, "mutations": []}`), 400, "BAD_REQUEST", "device"},
		{"unknown top-level field", []byte(`{"device": "phone-1", "mutations": [], "colour": "red"}`), 400, "BAD_REQUEST", "colour"},
		{"mutations not a list", []byte(`{"device": "phone-1", "mutations": {"n": 1}}`), 400, "BAD_REQUEST", "mutations"},
		{"two JSON values", []byte(`{"device": "phone-1", "mutations": []} {}`), 400, "BAD_REQUEST", "body"},
		{"missing device", reqBody(t, "", okMut), 400, "BAD_REQUEST", "device"},
		{"counters not increasing", reqBody(t, "phone-1", okMut, second), 400, "BAD_REQUEST", "mutations[1].n"},
		{"counter zero", reqBody(t, "phone-1", devsync.Mutation{N: 0, Op: "upsert", Record: good}), 400, "BAD_REQUEST", "mutations[0].n"},
		{"stamp far in the hub's future", reqBody(t, "phone-1", devsync.Mutation{N: 10, Op: "upsert", Record: future}), 409, "CLOCK_SKEW", "mutations[0].record.stamp.l"},
		{"stamp counter of the wrong type", []byte(`{"device":"phone-1","mutations":[{"n":10,"op":"upsert","record":{"id":"x","stamp":{"l":"soon"}}}]}`), 400, "BAD_REQUEST", "mutations[0].record.stamp.l"},
		{"generation above 2^53 − 1", reqBody(t, "phone-1", okMut, devsync.Mutation{N: 11, Op: "restore", Record: huge}), 400, "BAD_REQUEST", "mutations[1].record.gen"},
		{"generation of 2^63 − 1", []byte(`{"device":"phone-1","mutations":[{"n":10,"op":"restore","record":{"id":"` + good.ID + `","kind":"checkin","athlete":"` + a.ID + `","day":"2026-11-20","at":"2026-11-20T07:00:00Z","device":"phone-1","stamp":{"l":1,"c":0},"gen":9223372036854775807,"body":{"mass_kg":70}}}]}`), 400, "BAD_REQUEST", "mutations[0].record.gen"},
		{"counter above 2^53 − 1", reqBody(t, "phone-1", devsync.Mutation{N: devsync.MaxExact + 1, Op: "upsert", Record: good}), 400, "BAD_REQUEST", "mutations[0].n"},
		{"too many mutations", reqBody(t, "phone-1", manyMutations(good, devsync.MaxMutationsPerPush+1)...), 413, "TOO_LARGE", "mutations"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			before := h.export()
			st, out := h.pushRaw(tc.body)
			var eb devsync.ErrorBody
			require.NoError(t, json.Unmarshal(out, &eb), "answer %s", out)
			assert.Equal(t, tc.status, st, "answer %s", out)
			assert.Equal(t, tc.code, eb.Code)
			assert.Equal(t, tc.field, eb.Field, "reason %q", eb.Reason)
			assert.NotEmpty(t, eb.Reason)
			assert.Equal(t, string(before), string(h.export()), "the store changed")
		})
	}
}

func manyMutations(r devsync.Record, n int) []devsync.Mutation {
	out := make([]devsync.Mutation, n)
	for i := range out {
		out[i] = devsync.Mutation{N: uint64(100 + i), Op: "upsert", Record: r}
	}
	return out
}

// TestPush_BadRecords: one bad record in a batch is rejected with its
// field and reason; the good records around it are stored; nothing
// already stored changes.
func TestPush_BadRecords(t *testing.T) {
	h, a := seeded(t)
	stored := h.rec("checkin", a.ID, "2026-11-18", map[string]any{"mass_kg": 70.5})
	other := h.athlete("Other Fighter", "lb")
	require.Equal(t, 2, h.push("phone-1", 3, stored, other).Applied)
	n := uint64(100)

	type mod func(r *devsync.Record, m *devsync.Mutation)
	body := func(v map[string]any) mod {
		return func(r *devsync.Record, _ *devsync.Mutation) { r.Body, _ = json.Marshal(v) }
	}
	cases := []struct {
		name  string
		kind  string
		mod   mod
		field string
	}{
		{"unknown kind", "checkin", func(r *devsync.Record, _ *devsync.Mutation) { r.Kind = "breakfast" }, "kind"},
		{"missing athlete", "checkin", func(r *devsync.Record, _ *devsync.Mutation) { r.Athlete = "" }, "athlete"},
		{"athlete that does not exist", "checkin", func(r *devsync.Record, _ *devsync.Mutation) { r.Athlete = newID(t) }, "athlete"},
		{"day not on the calendar", "checkin", func(r *devsync.Record, _ *devsync.Mutation) { r.Day = "2026-02-30" }, "day"},
		{"day in the wrong format", "checkin", func(r *devsync.Record, _ *devsync.Mutation) { r.Day = "20/11/2026" }, "day"},
		{"day two days ahead of the hub", "checkin", func(r *devsync.Record, _ *devsync.Mutation) { r.Day = "2026-11-22" }, "day"},
		{"at not a timestamp", "checkin", func(r *devsync.Record, _ *devsync.Mutation) { r.At = "yesterday" }, "at"},
		{"id not a UUID", "checkin", func(r *devsync.Record, _ *devsync.Mutation) { r.ID = "not-an-id" }, "id"},
		{"mass out of range", "checkin", body(map[string]any{"mass_kg": 812}), "body.mass_kg"},
		{"mass as words", "checkin", body(map[string]any{"mass_kg": "heavy"}), "body.mass_kg"},
		{"wellness item 6", "checkin", body(map[string]any{"fatigue": 6}), "body.fatigue"},
		{"wellness item 2.5", "checkin", body(map[string]any{"mood": 2.5}), "body.mood"},
		{"USG out of range", "checkin", body(map[string]any{"usg": 1.2}), "body.usg"},
		{"unknown body field", "checkin", body(map[string]any{"mass_kg": 70, "weight": 70}), "body.weight"},
		{"session RPE 11", "session", body(map[string]any{"type": "boxing", "minutes": 60, "rpe": 11}), "body.rpe"},
		{"session minutes 0", "session", body(map[string]any{"type": "boxing", "minutes": 0, "rpe": 5}), "body.minutes"},
		{"session type unknown", "session", body(map[string]any{"type": "yoga-ish", "minutes": 30, "rpe": 3}), "body.type"},
		{"flight time 1.5 s", "jump", body(map[string]any{"test": "cmj", "flight_ms": []any{520, 1500}}), "body.flight_ms[1]"},
		{"jump with no attempts", "jump", body(map[string]any{"test": "cmj"}), "body.heights_cm"},
		{"round intensity 4", "round", body(map[string]any{"activity": "spar", "seconds": 180, "intensity": 4}), "body.intensity"},
		{"round activity unknown", "round", body(map[string]any{"activity": "karate", "seconds": 180, "intensity": 2}), "body.activity"},
		{"incident type unknown", "incident", body(map[string]any{"type": "bruise"}), "body.type"},
		{"clearance without an incident", "clearance", body(map[string]any{"by": "Dr. Example"}), "body.incident"},
		{"decision for an unknown rule", "decision", body(map[string]any{"rule": "vibes", "note": "fine"}), "body.rule"},
		{"upsert carrying a tombstone", "checkin", func(r *devsync.Record, m *devsync.Mutation) { r.Deleted = true }, "op"},
		{"unknown operation", "checkin", func(r *devsync.Record, m *devsync.Mutation) { m.Op = "merge" }, "op"},
		{"record from another device", "checkin", func(r *devsync.Record, _ *devsync.Mutation) { r.Device = "phone-9" }, "device"},
		{"record moved to another athlete", "checkin", func(r *devsync.Record, _ *devsync.Mutation) {
			r.ID = stored.ID
			r.Athlete = other.ID
			r.Stamp.L = stored.Stamp.L + 10
		}, "athlete"},
		{"kind changed under a stored id", "checkin", func(r *devsync.Record, _ *devsync.Mutation) {
			r.ID = stored.ID
			r.Kind = "note"
			r.Body, _ = json.Marshal(map[string]any{"text": "hello"})
			r.Stamp.L = stored.Stamp.L + 10
		}, "kind"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			before := h.export()
			bad := h.rec(tc.kind, a.ID, "2026-11-20", map[string]any{"mass_kg": 71})
			if tc.kind != "checkin" {
				bad.Body = nil
			}
			okA := h.rec("note", a.ID, "2026-11-20", map[string]any{"text": "before"})
			okB := h.rec("note", a.ID, "2026-11-20", map[string]any{"text": "after"})
			badMut := devsync.Mutation{N: n + 1, Op: "upsert", Record: bad}
			tc.mod(&badMut.Record, &badMut)
			req := devsync.PushRequest{Device: "phone-1", Mutations: []devsync.Mutation{
				{N: n, Op: "upsert", Record: okA}, badMut, {N: n + 2, Op: "upsert", Record: okB}}}
			n += 3
			b, _ := json.Marshal(req)
			st, out := h.pushRaw(b)
			require.Equal(t, 200, st, "answer %s", out)
			var resp devsync.PushResponse
			require.NoError(t, json.Unmarshal(out, &resp))
			require.Len(t, resp.Rejected, 1, "answer %s", out)
			rj := resp.Rejected[0]
			assert.Equal(t, badMut.N, rj.N)
			assert.Equal(t, tc.field, rj.Field, "reason %q", rj.Reason)
			assert.NotEmpty(t, rj.Reason)
			assert.Equal(t, 2, resp.Applied, "the good records around the bad one are stored")
			assert.Equal(t, n-1, resp.AckedThrough, "the counter moves past the rejected mutation")
			// Everything stored before is unchanged, byte for byte.
			after := h.export()
			for _, line := range strings.Split(strings.TrimSpace(string(before)), "\n") {
				assert.Contains(t, string(after), line)
			}
			got, err := h.store.Get(stored.ID)
			require.NoError(t, err)
			assert.Equal(t, "checkin", got.Kind)
		})
	}
	require.GreaterOrEqual(t, len(cases), 25)
}

// TestPush_Idempotent: the same batch twice stores each record once; a
// lower stamp never overwrites a higher one; a delete stays deleted until
// restored.
func TestPush_Idempotent(t *testing.T) {
	h, a := seeded(t)
	c := h.rec("checkin", a.ID, "2026-11-20", map[string]any{"mass_kg": 70.0})
	first := h.push("phone-1", 10, c)
	again := h.push("phone-1", 10, c)
	assert.Equal(t, 1, first.Applied)
	assert.Equal(t, 0, again.Applied)
	assert.Equal(t, 1, again.Duplicates)
	assert.Equal(t, first.MaxSeq, again.MaxSeq, "a duplicate takes no new sequence number")

	// The same record re-sent under new counters (a re-push) changes nothing.
	assert.Equal(t, 1, h.push("phone-1", 11, c).Superseded)

	// A higher stamp wins; a lower one afterwards does not.
	newer := c
	newer.Stamp.L += 1000
	newer.Body = json.RawMessage(`{"mass_kg":69.8}`)
	older := c
	older.Stamp.L -= 1000
	older.Body = json.RawMessage(`{"mass_kg":75.0}`)
	assert.Equal(t, 1, h.push("phone-1", 12, newer).Applied)
	assert.Equal(t, 1, h.push("phone-1", 13, older).Superseded)
	got, err := h.store.Get(c.ID)
	require.NoError(t, err)
	assert.JSONEq(t, `{"mass_kg":69.8}`, string(got.Body))

	// Delete, then a later-stamped edit from an offline phone: still deleted.
	del := newer
	del.Deleted = true
	del.Stamp.L += 1000
	assert.Equal(t, 1, h.push("phone-1", 14, del).Applied)
	late := newer
	late.Stamp.L += 5000
	late.Body = json.RawMessage(`{"mass_kg":69.0}`)
	assert.Equal(t, 1, h.push("phone-1", 15, late).Superseded)
	got, _ = h.store.Get(c.ID)
	assert.True(t, got.Deleted, "a delete is sticky against later edits")

	// An explicit restore brings it back.
	res := late
	res.Gen = 1
	res.Stamp.L += 1000
	assert.Equal(t, 1, h.push("phone-1", 16, res).Applied)
	got, _ = h.store.Get(c.ID)
	assert.False(t, got.Deleted)
	assert.JSONEq(t, `{"mass_kg":69.0}`, string(got.Body))

	var hist struct{ Versions []devsync.Record }
	require.Equal(t, 200, h.get("/api/records/"+c.ID+"/history", &hist))
	assert.Len(t, hist.Versions, 4, "first, edit, delete and restore are all kept")
}

// TestPull_Pages: pull returns every record once in sequence order across
// pages, and an edited record moves to a later page.
func TestPull_Pages(t *testing.T) {
	h, a := seeded(t)
	var recs []devsync.Record
	for i := 0; i < 7; i++ {
		recs = append(recs, h.rec("note", a.ID, "2026-11-20", map[string]any{"text": fmt.Sprint("note ", i)}))
	}
	h.push("phone-1", 10, recs...)
	seen := map[string]int{}
	var since uint64
	for pages := 0; pages < 20; pages++ {
		var p devsync.PullResponse
		require.Equal(t, 200, h.get(fmt.Sprintf("/api/pull?since=%d&limit=3", since), &p))
		for _, r := range p.Records {
			seen[r.ID]++
		}
		assert.GreaterOrEqual(t, p.Next, since, "the cursor never moves back")
		since = p.Next
		if !p.More {
			break
		}
	}
	assert.Len(t, seen, 9)
	for id, n := range seen {
		assert.Equal(t, 1, n, "record %s seen %d times", id, n)
	}
	var p devsync.PullResponse
	require.Equal(t, 400, h.get("/api/pull?since=-1", nil))
	require.Equal(t, 400, h.get("/api/pull?limit=0", nil))
	require.Equal(t, 200, h.get(fmt.Sprintf("/api/pull?since=%d", since), &p))
	assert.Empty(t, p.Records)
	assert.False(t, p.More)
}
