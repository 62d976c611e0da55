package sync

import (
	"bytes"
	"encoding/json"
	"errors"
	"math/rand/v2"
	"reflect"
	"testing"
	"unicode/utf8"
)

// strictDecode is the reference: encoding/json, unknown fields refused,
// one value only (the hub's slow path).
func strictDecode(b []byte) (PushRequest, error) {
	var req PushRequest
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&req); err != nil {
		return req, err
	}
	if dec.More() {
		return req, errTrailing
	}
	return req, nil
}

var errTrailing = errors.New("more than one JSON value")

func checkSame(t *testing.T, b []byte) bool {
	t.Helper()
	if !utf8.Valid(b) {
		return false
	}
	var fast PushRequest
	if !DecodePush(b, &fast) {
		return false
	}
	slow, err := strictDecode(b)
	if err != nil {
		t.Fatalf("DecodePush accepted %q; encoding/json refuses it: %v", b, err)
	}
	if !reflect.DeepEqual(fast, slow) {
		t.Fatalf("DecodePush(%q)\n = %+v\nencoding/json\n = %+v", b, fast, slow)
	}
	return true
}

func FuzzDecodePush(f *testing.F) {
	f.Add([]byte(`{"device":"p1","epoch":"e","waiting":3,"mutations":[{"n":1,"op":"upsert","record":{"id":"a","kind":"checkin","athlete":"b","day":"2026-03-02","at":"x","device":"p1","stamp":{"l":5,"c":1},"gen":1,"deleted":false,"body":{"mass_kg":70.4,"note":"a \"b\""}}}]}`))
	f.Add([]byte(`{"device":"p1","mutations":[]}`))
	f.Add([]byte(`{"device":"p1","mutations":null}`))
	f.Add([]byte(`{"Device":"p1"}`))
	f.Add([]byte(`{"device":"p1","device":"p2"}`))
	f.Add([]byte(`{"device":"p1","mutations":[{"n":-1}]}`))
	f.Add([]byte(`{"device":"p1","mutations":[{"record":{"stamp":{"c":4294967296}}}]}`))
	f.Add([]byte(`{"device":"p1","mutations":[{"record":{"body":null}}]} x`))
	f.Fuzz(func(t *testing.T, b []byte) { checkSame(t, b) })
}

// Every push a client writes (json.Marshal, or spaced out by a pretty
// printer) takes the fast path and decodes as encoding/json decodes it.
func TestDecodePushTakesClientPushes(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	words := []string{"", "a", "phone-7", "2026-03-02", "Ünal's phone", "x y"}
	bodies := []string{`{"mass_kg":70.4,"sleep":4}`, `{"note":"ate \"late\", slept <6 h"}`, `[1,2,{"a":null}]`, `{"heights_cm":[41.2,40.8]}`}
	for i := 0; i < 2000; i++ {
		req := PushRequest{Device: words[rng.IntN(len(words))], Epoch: words[rng.IntN(len(words))], Waiting: rng.IntN(50)}
		if rng.IntN(4) > 0 {
			req.Mutations = []Mutation{}
		}
		for j := rng.IntN(5); j > 0; j-- {
			r := Record{ID: words[rng.IntN(len(words))], Kind: "checkin", Athlete: words[rng.IntN(len(words))],
				Day: words[rng.IntN(len(words))], At: words[rng.IntN(len(words))], Device: "p",
				Stamp: HLC{L: rng.Int64(), C: rng.Uint32()}, Gen: rng.IntN(3), Deleted: rng.IntN(4) == 0}
			if rng.IntN(5) > 0 {
				r.Body = json.RawMessage(bodies[rng.IntN(len(bodies))])
			}
			req.Mutations = append(req.Mutations, Mutation{N: rng.Uint64(), Op: "upsert", Record: r})
		}
		b, err := json.Marshal(req)
		if err != nil {
			t.Fatal(err)
		}
		if rng.IntN(2) == 0 {
			var out bytes.Buffer
			json.Indent(&out, b, " ", "\t")
			b = out.Bytes()
		}
		if !checkSame(t, b) {
			t.Fatalf("DecodePush refused a push as clients write it: %s", b)
		}
	}
	// Not plain, left to encoding/json (which accepts these).
	for _, b := range []string{`{"Device":"p"}`, `{"device":"p\u0031"}`, `{"device":"p","mutations":[{"record":{"body":null}}]}`, `{"device":"p","device":"q"}`} {
		var req PushRequest
		if DecodePush([]byte(b), &req) {
			t.Errorf("DecodePush took %s; only the plain form is its to take", b)
		}
		if _, err := strictDecode([]byte(b)); err != nil {
			t.Errorf("encoding/json refused %s: %v", b, err)
		}
	}
}
