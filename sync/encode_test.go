package sync

import (
	"encoding/json"
	"testing"
)

// The reference for a record's bytes is the Go standard library's
// encoding/json: AppendJSON must write exactly what json.Marshal writes,
// since stored bytes take part in the last-writer-wins tie-break.
func sameAsMarshal(t *testing.T, r Record) {
	t.Helper()
	want, werr := json.Marshal(&r)
	got, gerr := r.AppendJSON([]byte("prefix"))
	if (werr == nil) != (gerr == nil) {
		t.Fatalf("AppendJSON error %v, json.Marshal error %v for %+v", gerr, werr, r)
	}
	if werr != nil {
		return
	}
	if string(got) != "prefix"+string(want) {
		t.Fatalf("AppendJSON wrote\n  %s\njson.Marshal wrote\n  %s", got[len("prefix"):], want)
	}
}

func TestAppendJSONMatchesMarshal(t *testing.T) {
	base := Record{ID: "019a2b3c-4d5e-7f60-8a9b-0c1d2e3f4a5b", Kind: "checkin", Athlete: "019a2b3c-4d5e-7f60-8a9b-0c1d2e3f4a50",
		Day: "2026-03-02", At: "2026-03-02T07:05:00+01:00", Device: "phone-1", Stamp: HLC{L: 1772431500000, C: 3},
		Body: json.RawMessage(`{"mass_kg":70.4,"note":"felt heavy, slept \"ok\""}`)}
	cases := map[string]func(r *Record){
		"usual":          func(r *Record) {},
		"camp-wide":      func(r *Record) { r.Athlete, r.Day = "", "" },
		"tombstone":      func(r *Record) { r.Deleted, r.Gen, r.Body = true, 2, nil },
		"empty body":     func(r *Record) { r.Body = json.RawMessage{} },
		"negative stamp": func(r *Record) { r.Stamp = HLC{L: -1, C: 4294967295} },
		"html in body":   func(r *Record) { r.Body = json.RawMessage(`{"note":"<b>&</b>"}`) },
		"spaced body":    func(r *Record) { r.Body = json.RawMessage("{ \"a\" : [1, 2]\n}") },
		"space in text":  func(r *Record) { r.Body = json.RawMessage(`{"note":"a b\tc"}`) },
		"line separator": func(r *Record) { r.Body = json.RawMessage("{\"note\":\"a\u2028b\"}") },
		"unicode text":   func(r *Record) { r.Body = json.RawMessage(`{"note":"Ünal – ok"}`); r.Device = "Ünal's phone" },
		"quote in id":    func(r *Record) { r.ID = `a"b` },
		"html in device": func(r *Record) { r.Device = "a<b" },
		"control char":   func(r *Record) { r.At = "x\x01" },
		"invalid body":   func(r *Record) { r.Body = json.RawMessage(`{"a":`) },
		"bare string":    func(r *Record) { r.Body = json.RawMessage(`"x\\"`) },
	}
	for name, mod := range cases {
		t.Run(name, func(t *testing.T) {
			r := base
			mod(&r)
			sameAsMarshal(t, r)
		})
	}
}

func FuzzAppendJSON(f *testing.F) {
	f.Add("019a2b3c-4d5e-7f60-8a9b-0c1d2e3f4a5b", "checkin", "2026-03-02", "phone", int64(1772431500000), uint32(0), 0, false, []byte(`{"mass_kg":70.4}`))
	f.Add("a", "b", "", "<", int64(-3), uint32(9), -2, true, []byte(`{"x":"\u2029 <"}`))
	f.Add("", "", "", "", int64(0), uint32(0), 0, false, []byte(" [1, {\"a\":null}] "))
	f.Fuzz(func(t *testing.T, id, kind, day, device string, l int64, c uint32, gen int, deleted bool, body []byte) {
		sameAsMarshal(t, Record{ID: id, Kind: kind, Athlete: id, Day: day, At: day, Device: device,
			Stamp: HLC{L: l, C: c}, Gen: gen, Deleted: deleted, Body: body})
	})
}
