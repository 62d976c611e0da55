package records

import (
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"time"

	devsync "cornerbook/sync"
)

// Probe is one body tried against a kind's rules: generated from the
// registry (every limit of every field, both sides, and every case), with
// what the hub answered. Tests hold the hub to the registry's words and
// the app's checks to the hub's answers.
type Probe struct {
	Kind   string          `json:"kind"`
	What   string          `json:"what"` // e.g. "body.mass_kg above 250"
	Body   json.RawMessage `json:"body"`
	Field  string          `json:"field"`  // the refused field; "" when accepted
	Reason string          `json:"reason"` // the hub's words; "" when accepted
	// Want is the refusal the registry predicts ("" for a value at a limit,
	// which must be accepted by this field — another rule may still refuse).
	WantField, WantReason string `json:"-"`
}

// Probes builds every probe and answers it with PrepareAt(now).
func Probes(now time.Time) ([]Probe, error) {
	var out []Probe
	for _, k := range Registry {
		base := map[string]any{}
		if err := json.Unmarshal([]byte(k.Example), &base); err != nil {
			return nil, fmt.Errorf("%s: example: %v", k.Name, err)
		}
		add := func(what string, body map[string]any, field, reason string) {
			raw, _ := json.Marshal(body)
			out = append(out, Probe{Kind: k.Name, What: what, Body: raw, WantField: field, WantReason: reason})
		}
		for _, f := range k.Fields {
			if lo, hi, ok := f.Range(now.Year()); ok {
				step := 1.0
				if f.Decimals > 0 {
					step = math.Pow(10, -float64(f.Decimals))
				}
				below := lo - step
				if f.MinAbove {
					below = lo
				}
				add(f.Path+" below its range", with(base, f.Path, below), index0(f.Path), f.Refusal(below, now.Year()))
				if !math.IsInf(hi, 1) {
					add(f.Path+" above its range", with(base, f.Path, hi+step), index0(f.Path), f.Refusal(hi+step, now.Year()))
					add(f.Path+" at its highest", with(base, f.Path, hi), "", "")
				}
				if !f.MinAbove {
					add(f.Path+" at its lowest", with(base, f.Path, lo), "", "")
				}
				if f.Step > 0 {
					v := lo + f.Step/2.5
					add(f.Path+" between steps", with(base, f.Path, v), index0(f.Path), f.Refusal(v, now.Year()))
				}
			}
			if f.Required != "" {
				// Left out (a key of the example), empty, or spaces only
				// for a text: refused in the registry's words.
				if name := strings.TrimPrefix(f.Path, "body."); !strings.ContainsAny(name, ".[") {
					if _, ok := base[name]; ok {
						b := clone(base)
						delete(b, name)
						add(f.Path+" left out", b, f.Path, f.Required)
					}
				}
				if f.Min == nil {
					add(f.Path+" empty", with(base, f.Path, ""), index0(f.Path), f.Required)
				}
				if f.MaxLen > 0 {
					add(f.Path+" of spaces only", with(base, f.Path, "   "), index0(f.Path), f.Required)
				}
			}
			if f.MaxItems > 0 {
				arr, _ := strings.CutSuffix(f.Path, "[]")
				lo, _, _ := f.Range(now.Year())
				items := func(n int) []any {
					out := make([]any, n)
					for i := range out {
						out[i] = lo
					}
					return out
				}
				add(arr+" with too many", with(base, arr, items(f.MaxItems+1)), arr, f.ItemsRefusal(f.MaxItems+1))
				add(arr+" at its most", with(base, arr, items(f.MaxItems)), "", "")
				if f.MinItems > 1 {
					add(arr+" with too few", with(base, arr, items(f.MinItems-1)), arr, f.ItemsRefusal(f.MinItems-1))
				}
			}
			if len(f.Enum) > 0 {
				add(f.Path+" not in its list", with(base, f.Path, "zzz"), index0(f.Path), NotAChoiceWords)
			}
			if f.MaxLen > 0 {
				long := strings.Repeat("a", f.MaxLen+1)
				add(f.Path+" too long", with(base, f.Path, long), index0(f.Path), f.LengthRefusal(f.MaxLen+1))
				add(f.Path+" at its longest", with(base, f.Path, strings.Repeat("a", f.MaxLen)), "", "")
				rlo := "Ana \u202Eodevni"
				add(f.Path+" with a right-to-left override", with(base, f.Path, rlo), index0(f.Path), CheckText(rlo, f.MaxLen, true))
				add(f.Path+" of invisible characters", with(base, f.Path, "\u200b\u3164"), index0(f.Path), InvisibleWords)
				add(f.Path+" in several scripts", with(base, f.Path, "Jose\u0301 \u0633\u0627\u0631\u0627\u200F \U0001F469\u200D\U0001F52C"), "", "")
			}
		}
		for _, c := range k.Cases {
			patch := map[string]any{}
			if err := json.Unmarshal([]byte(c.Patch), &patch); err != nil {
				return nil, fmt.Errorf("%s: case %q: %v", k.Name, c.Name, err)
			}
			body := clone(base)
			for key, v := range patch {
				if v == nil {
					delete(body, key)
				} else {
					body[key] = v
				}
			}
			add(c.Name, body, c.Field, "")
		}
		add("the example", clone(base), "", "")
	}
	prep := PrepareAt(now)
	for i := range out {
		p := &out[i]
		rec := devsync.Record{ID: "0190a0b0-0000-7000-8000-0000000000aa", Kind: p.Kind, Athlete: "0190a0b0-0000-7000-8000-0000000000bb",
			Day: now.Format(time.DateOnly), At: now.Format(time.RFC3339), Device: "probe", Body: append(json.RawMessage(nil), p.Body...)}
		k, _ := KindOf(p.Kind)
		switch k.Scope {
		case Self:
			rec.Athlete = rec.ID
		case CampOrAthlete:
			rec.Athlete = ""
		}
		if !k.Dated {
			rec.Day = ""
		}
		if err := prep(&rec); err != nil {
			fe, ok := err.(*devsync.FieldError)
			if !ok {
				return nil, fmt.Errorf("%s %s: %v", p.Kind, p.What, err)
			}
			p.Field, p.Reason = fe.Field, fe.Reason
		}
	}
	return out, nil
}

// index0 names the first element of an array path: "body.heights_cm[0]".
func index0(path string) string { return strings.ReplaceAll(path, "[]", "[0]") }

func clone(m map[string]any) map[string]any {
	b, _ := json.Marshal(m)
	out := map[string]any{}
	json.Unmarshal(b, &out)
	return out
}

// with returns a copy of body with the value at path ("body.a", "body.a[]",
// "body.a[].b") set; an array's first element is set (made when missing).
func with(body map[string]any, path string, v any) map[string]any {
	out := clone(body)
	parts := strings.Split(strings.TrimPrefix(path, "body."), ".")
	var cur any = out
	for i, part := range parts {
		last := i == len(parts)-1
		m := cur.(map[string]any)
		if name, ok := strings.CutSuffix(part, "[]"); ok {
			arr, _ := m[name].([]any)
			if len(arr) == 0 {
				if last {
					arr = []any{nil}
				} else {
					arr = []any{map[string]any{}}
				}
			}
			if last {
				arr[0] = v
				m[name] = arr
				return out
			}
			m[name] = arr
			cur = arr[0]
			continue
		}
		if last {
			m[part] = v
			return out
		}
		if _, ok := m[part].(map[string]any); !ok {
			m[part] = map[string]any{}
		}
		cur = m[part]
	}
	return out
}
