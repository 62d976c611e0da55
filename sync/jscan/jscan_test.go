package jscan

import (
	"encoding/json"
	"math"
	"strconv"
	"testing"
)

// depth is the deepest nesting of objects and arrays in a valid document.
func depth(b []byte) int {
	d, max, in, esc := 0, 0, false, false
	for _, c := range b {
		switch {
		case esc:
			esc = false
		case in && c == '\\':
			esc = true
		case c == '"':
			in = !in
		case !in && (c == '{' || c == '['):
			d++
			if d > max {
				max = d
			}
		case !in && (c == '}' || c == ']'):
			d--
		}
	}
	return max
}

// The reference for "valid JSON" is the Go standard library's
// encoding/json (json.Valid), which implements RFC 8259 (Bray 2017).
func FuzzValueMatchesValid(f *testing.F) {
	for _, s := range []string{
		`{"a":[1,-0.5e+3,true,false,null,"x\u00e9\n"]}`, `[]`, `{}`, `"\ud83d"`, `01`, `1.`, `.5`, `-`, `1e`,
		`{"a" 1}`, `[1,]`, `{"a":1,}`, `"\x"`, "\"\x01\"", `nul`, `tru`, ` 7 `, `[[[[]]]]`, `"\u12"`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		s := Scanner{Buf: b}
		_, ok := s.Value()
		ok = ok && s.End()
		valid := json.Valid(b)
		if ok && !valid {
			t.Fatalf("Value accepted %q, which is not valid JSON", b)
		}
		if valid && !ok && depth(b) <= MaxDepth+1 {
			t.Fatalf("Value refused valid JSON %q", b)
		}
	})
}

// Numbers read as encoding/json reads them into float64, int64 and
// uint32 fields, or not at all.
func FuzzNumbersMatchDecode(f *testing.F) {
	for _, s := range []string{"0", "-0", "12", "1.5", "-2e3", "1e400", "9223372036854775808", "4294967296", "-1", "01", "1.0"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, in string) {
		if v, ok := (&Scanner{Buf: []byte(in)}).Float(); ok && (&Scanner{Buf: []byte(in)}).rest() {
			var w float64
			if err := json.Unmarshal([]byte(in), &w); err != nil || (w != v && !(math.IsNaN(w) && math.IsNaN(v))) {
				t.Fatalf("Float(%q) = %v; encoding/json: %v, %v", in, v, w, err)
			}
		}
		if v, ok := (&Scanner{Buf: []byte(in)}).Int(64); ok && (&Scanner{Buf: []byte(in)}).rest() {
			var w int64
			if err := json.Unmarshal([]byte(in), &w); err != nil || w != v {
				t.Fatalf("Int(%q) = %v; encoding/json: %v, %v", in, v, w, err)
			}
		}
		if v, ok := (&Scanner{Buf: []byte(in)}).Uint(32); ok && (&Scanner{Buf: []byte(in)}).rest() {
			var w uint32
			if err := json.Unmarshal([]byte(in), &w); err != nil || uint64(w) != v {
				t.Fatalf("Uint(%q) = %v; encoding/json: %v, %v", in, v, w, err)
			}
		}
	})
}

// rest: the number is the whole input.
func (s *Scanner) rest() bool {
	_, ok := s.number()
	return ok && s.End()
}

func TestPlainForms(t *testing.T) {
	s := Scanner{Buf: []byte(` {"id" : "a-1", "n":42, "ok":true, "raw":{"x":"\"q\""}, "f":[1,2.5]} `)}
	got := map[string]string{}
	ok := s.Object(func(k []byte) bool {
		switch string(k) {
		case "id":
			v, ok := s.String()
			got["id"] = v
			return ok
		case "n":
			v, ok := s.Int(64)
			got["n"] = strconv.FormatInt(v, 10)
			return ok
		case "ok":
			v, ok := s.Bool()
			got["ok"] = strconv.FormatBool(v)
			return ok
		case "raw":
			v, ok := s.Value()
			got["raw"] = string(v)
			return ok
		case "f":
			sum := 0.0
			ok := s.Array(func() bool { v, ok := s.Float(); sum += v; return ok })
			got["f"] = strconv.FormatFloat(sum, 'f', -1, 64)
			return ok
		}
		return false
	})
	if !ok || !s.End() {
		t.Fatalf("plain document refused at byte %d", s.Pos)
	}
	want := map[string]string{"id": "a-1", "n": "42", "ok": "true", "raw": `{"x":"\"q\""}`, "f": "3.5"}
	for k, v := range want {
		if got[k] != v {
			t.Errorf("%s = %q, want %q", k, got[k], v)
		}
	}
	// Not plain: the caller falls back to encoding/json for these.
	for _, in := range []string{`"a\"b"`, `null`, "\"tab\there\""} {
		if _, ok := (&Scanner{Buf: []byte(in)}).String(); ok {
			t.Errorf("String(%s) accepted; escapes, nulls and control characters are not plain", in)
		}
	}
	if _, ok := (&Scanner{Buf: []byte("1.5")}).Int(64); ok {
		t.Error("Int accepted 1.5")
	}
}
