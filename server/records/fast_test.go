package records

import (
	"bytes"
	"math"
	"math/rand/v2"
	"reflect"
	"testing"
)

// The reference for the fast body path is the standard path: the Go
// standard library's encoding/json (decode strictly, encode with HTML
// escaping off). Whatever the fast path accepts must decode to the same
// value, with the same fields present, and encode to the same bytes.

// flatBodies are the body types the fast path describes, by kind.
var flatBodies = map[string]any{
	KindAthlete: Athlete{}, KindCheckin: Checkin{}, KindJump: Jump{}, KindRound: Round{}, KindIntervals: Intervals{},
	KindSession: Session{}, KindIncident: Incident{}, KindClearance: Clearance{}, KindDecision: Decision{}, KindNote: Note{},
}

// flatKinds lists flatBodies' kinds in a fixed order (the fuzz input picks
// one by index).
var flatKinds = func() []string {
	var ks []string
	for _, k := range Kinds {
		if _, ok := flatBodies[k]; ok {
			ks = append(ks, k)
		}
	}
	return ks
}()

func newBody(kind string) any { return reflect.New(reflect.TypeOf(flatBodies[kind])).Interface() }

func TestFlatKindsHavePlans(t *testing.T) {
	for _, k := range flatKinds {
		if planOf(reflect.TypeOf(flatBodies[k])) == nil {
			t.Errorf("%s has no fast plan: every push of it would take the slow path", k)
		}
	}
	for _, v := range []any{Bout{}, Settings{}} {
		if planOf(reflect.TypeOf(v)) != nil {
			t.Errorf("%T has nested fields; a flat plan cannot describe it", v)
		}
	}
}

func sameDecode(t *testing.T, kind string, raw []byte) {
	t.Helper()
	fast := newBody(kind)
	fp, ok := fastDecode(raw, fast)
	if !ok {
		return
	}
	slow := newBody(kind)
	sp, err := slowDecodeBody(raw, slow, kind)
	if err != nil {
		t.Fatalf("%s: fast path accepted %s; the standard path refuses it: %v", kind, raw, err)
	}
	if !reflect.DeepEqual(fast, slow) {
		t.Fatalf("%s %s:\nfast %+v\nslow %+v", kind, raw, fast, slow)
	}
	for _, f := range planOf(reflect.TypeOf(fast).Elem()).fields {
		if fp.has(f.name) != sp[f.name] {
			t.Fatalf("%s %s: field %s present: %v, standard path: %v", kind, raw, f.name, fp.has(f.name), sp[f.name])
		}
	}
	sameEncode(t, fast)
}

func sameEncode(t *testing.T, v any) {
	t.Helper()
	want, err := slowCanonical(v)
	got, ok := fastCanonical(v)
	if !ok {
		return
	}
	if err != nil {
		t.Fatalf("fast encode of %+v succeeded; encoding/json failed: %v", v, err)
	}
	if !bytes.Equal(got, want) {
		t.Fatalf("fast encode of %+v\n  %s\nencoding/json\n  %s", v, got, want)
	}
}

func FuzzFastBody(f *testing.F) {
	for _, s := range []string{
		`{"mass_kg":70.4,"sleep_h":7.5,"sleep":4,"usg":1.014,"note":"ok"}`,
		`{"heights_cm":[41.2,40.8],"test":"cmj","best_cm":41.2}`,
		`{"activity":"spar","seconds":180,"intensity":3,"partner":"Ünal"}`,
		`{"modality":"bike","work_s":30,"rest_s":30.5,"reps":8,"sets":2,"rpe":7.5,"minutes_derived":true,"done_reps":7}`,
		`{"type":"boxing","minutes":60,"rpe":6}`, `{"rule":"cmj","note":"a","by":"b"}`,
		`{"mass_kg":null}`, `{"Mass_kg":1}`, `{"sleep":4.0}`, `{"sleep":1e2}`, `{"note":"a\"b"}`, `{"a":1}`,
		`{"mass_kg":1,"mass_kg":2}`, `{"heights_cm":[]}`, `{"heights_cm":[1,null]}`, `{"minutes_derived":1}`, ` { } `, `[]`,
	} {
		for i := range flatKinds {
			f.Add(uint8(i), []byte(s))
		}
	}
	f.Fuzz(func(t *testing.T, k uint8, raw []byte) {
		sameDecode(t, flatKinds[int(k)%len(flatKinds)], raw)
	})
}

// Random bodies of every flat kind: the fast encoder writes the bytes
// encoding/json writes, and the fast decoder takes those bytes back
// whenever their text is plain.
func TestFastBodyRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	texts := []string{"", "spar", "Ünal – left hook", "a\"b", "tab\there", "x\u2028y", "<b>&", "  "}
	floats := []float64{0, math.Copysign(0, -1), 0.1, 70.4, 1.014, 1e-7, 1e-6, 123456789.125, 1e20, 1e21, 2.5e-10, -3}
	for i := 0; i < 5000; i++ {
		kind := flatKinds[rng.IntN(len(flatKinds))]
		v := newBody(kind)
		rv := reflect.ValueOf(v).Elem()
		plain := true
		for j := 0; j < rv.NumField(); j++ {
			fv := rv.Field(j)
			if rng.IntN(3) == 0 {
				continue
			}
			switch fv.Kind() {
			case reflect.String:
				s := texts[rng.IntN(len(texts))]
				plain = plain && plainText(s)
				fv.SetString(s)
			case reflect.Bool:
				fv.SetBool(rng.IntN(2) == 0)
			case reflect.Int:
				fv.SetInt(rng.Int64N(2000) - 1000)
			case reflect.Float64:
				fv.SetFloat(floats[rng.IntN(len(floats))])
			case reflect.Pointer:
				e := reflect.New(fv.Type().Elem())
				switch e.Elem().Kind() {
				case reflect.Int:
					e.Elem().SetInt(rng.Int64N(10))
				case reflect.Bool:
					e.Elem().SetBool(rng.IntN(2) == 0)
				default:
					e.Elem().SetFloat(floats[rng.IntN(len(floats))])
				}
				fv.Set(e)
			case reflect.Slice:
				xs := []float64{}
				for n := rng.IntN(4); n > 0; n-- {
					xs = append(xs, floats[rng.IntN(len(floats))])
				}
				fv.Set(reflect.ValueOf(xs))
			}
		}
		sameEncode(t, v)
		want, err := slowCanonical(v)
		if err != nil {
			t.Fatal(err)
		}
		if _, ok := fastCanonical(v); ok != plain {
			t.Fatalf("fast encoder ok=%v for %+v (plain text: %v)", ok, v, plain)
		}
		back := newBody(kind)
		if _, ok := fastDecode(want, back); ok != plain {
			t.Fatalf("fast decoder ok=%v for %s (plain text: %v)", ok, want, plain)
		}
		sameDecode(t, kind, want)
		if plain {
			again, _ := slowCanonical(back)
			if !bytes.Equal(again, want) {
				t.Fatalf("round trip changed %s into %s", want, again)
			}
		}
	}
}

// Athlete names with quotes and marks: the fast encoder writes what
// encoding/json writes, or gives way.
func TestFastCanonicalAthlete(t *testing.T) {
	yes, no := true, false
	for _, a := range []Athlete{
		{Name: "Ana Pereira", Units: "kg"},
		{Name: "Beto Lindqvist", Units: "lb", BirthYear: 1999, Sex: "m", Active: &no},
		{Name: "Chen \"Ice\" Wu", Units: "kg", Active: &yes},
		{Name: "Dara <Ó Súilleabháin>", Units: "kg", Sex: "f"},
	} {
		sameEncode(t, &a)
		if _, ok := fastCanonical(&a); !ok && plainText(a.Name) {
			t.Errorf("fast encoder refused %+v", a)
		}
	}
}
