package records

import (
	"bytes"
	"encoding/json"
	"testing"

	devsync "cornerbook/sync"
)

// FuzzPrepare feeds arbitrary kinds, days and bodies to Prepare. It must
// never panic, must return nil or a *devsync.FieldError, must leave a
// rejected body untouched, and must accept its own output unchanged.
func FuzzPrepare(f *testing.F) {
	for _, r := range goodRecords(&testing.T{}) {
		f.Add(r.Kind, r.Athlete, r.Day, []byte(r.Body), r.Deleted)
	}
	for _, c := range badCases(&testing.T{}) {
		f.Add(c.rec.Kind, c.rec.Athlete, c.rec.Day, []byte(c.rec.Body), c.rec.Deleted)
	}
	f.Add("checkin", "ath-1", "2026-03-02", []byte(`{"mass_kg":1e400}`), false)
	f.Add("settings", "", "", []byte(`{"thresholds":{"jump_drop":null}}`), false)
	f.Add("bout", "ath-1", "", []byte(`{"path":[null,{"day":null}],"weeks":[null]}`), false)
	f.Fuzz(func(t *testing.T, kind, athlete, day string, body []byte, deleted bool) {
		r := mk(kind, athlete, day, string(body))
		r.Deleted = deleted
		if kind == KindAthlete {
			r.Athlete = ""
		}
		before := append([]byte(nil), r.Body...)
		err := Prepare(&r)
		if err != nil {
			if _, ok := err.(*devsync.FieldError); !ok {
				t.Fatalf("error of type %T: %v", err, err)
			}
			if !bytes.Equal(before, r.Body) {
				t.Fatalf("rejected body changed:\n%q\n%q", before, r.Body)
			}
			return
		}
		if deleted {
			return
		}
		if !json.Valid(r.Body) {
			t.Fatalf("prepared body is not JSON: %q", r.Body)
		}
		again := r
		if err := Prepare(&again); err != nil {
			t.Fatalf("rejects its own output %s: %v", r.Body, err)
		}
		if !bytes.Equal(again.Body, r.Body) {
			t.Fatalf("not idempotent:\n%s\n%s", r.Body, again.Body)
		}
	})
}

// FuzzTopKeys checks the fast top-level key scan against the standard
// decoder on every valid JSON object.
func FuzzTopKeys(f *testing.F) {
	f.Add([]byte(`{"a":1,"b":null,"c":{"d":[1,"}",{"e":null}]},"f\u0041":"x\"y"}`))
	f.Add([]byte(` { "mass_kg" : 64.8 , "note" : "a,b}" } `))
	f.Add([]byte(`{}`))
	f.Fuzz(func(t *testing.T, raw []byte) {
		var m map[string]json.RawMessage
		if json.Unmarshal(raw, &m) != nil || m == nil {
			return
		}
		got := topKeys(raw)
		if len(got) != len(m) {
			t.Fatalf("%s: %d keys, want %d (%v)", raw, len(got), len(m), got)
		}
		for k, v := range m {
			present, ok := got[k]
			if !ok || present != (string(bytes.TrimSpace(v)) != "null") {
				t.Fatalf("%s: key %q: got %v %v", raw, k, present, ok)
			}
		}
	})
}
