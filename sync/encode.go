package sync

import (
	"bytes"
	"encoding/json"
	"strconv"

	"cornerbook/sync/jscan"
)

// AppendJSON appends r's JSON to dst: the very bytes json.Marshal(r)
// gives, written without reflection for the usual record (plain ASCII
// keys, a compact body without <, > or &), which is every record a
// prepared push stores. Any other record is handed to json.Marshal.
func (r *Record) AppendJSON(dst []byte) ([]byte, error) {
	if !plain(r.ID) || !plain(r.Kind) || !plain(r.Athlete) || !plain(r.Day) ||
		!plain(r.At) || !plain(r.Device) || !compactBody(r.Body) {
		v, err := json.Marshal(r)
		return append(dst, v...), err
	}
	if need := len(dst) + 128 + len(r.ID) + len(r.Kind) + len(r.Athlete) + len(r.Day) + len(r.At) + len(r.Device) + len(r.Body); cap(dst) < need {
		dst = append(make([]byte, 0, need), dst...)
	}
	dst = append(dst, `{"id":"`...)
	dst = append(dst, r.ID...)
	dst = append(dst, `","kind":"`...)
	dst = append(dst, r.Kind...)
	dst = append(dst, '"')
	if r.Athlete != "" {
		dst = append(dst, `,"athlete":"`...)
		dst = append(dst, r.Athlete...)
		dst = append(dst, '"')
	}
	if r.Day != "" {
		dst = append(dst, `,"day":"`...)
		dst = append(dst, r.Day...)
		dst = append(dst, '"')
	}
	dst = append(dst, `,"at":"`...)
	dst = append(dst, r.At...)
	dst = append(dst, `","device":"`...)
	dst = append(dst, r.Device...)
	dst = append(dst, `","stamp":{"l":`...)
	dst = strconv.AppendInt(dst, r.Stamp.L, 10)
	dst = append(dst, `,"c":`...)
	dst = strconv.AppendUint(dst, uint64(r.Stamp.C), 10)
	dst = append(dst, '}')
	if r.Gen != 0 {
		dst = append(dst, `,"gen":`...)
		dst = strconv.AppendInt(dst, int64(r.Gen), 10)
	}
	if r.Deleted {
		dst = append(dst, `,"deleted":true`...)
	}
	if len(r.Body) > 0 {
		dst = append(dst, `,"body":`...)
		dst = append(dst, r.Body...)
	}
	return append(dst, '}'), nil
}

// plain: printable ASCII that encoding/json writes unescaped (its HTML
// escaping covers <, > and &).
func plain(s string) bool {
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c < 0x20 || c > 0x7e || c == '"' || c == '\\' || c == '<' || c == '>' || c == '&' {
			return false
		}
	}
	return true
}

// compactBody: valid JSON that json.Marshal would copy byte for byte:
// no white space between tokens, no <, > or & and no U+2028 or U+2029
// (which it escapes). An empty body is omitted either way.
func compactBody(b json.RawMessage) bool {
	if len(b) == 0 {
		return true
	}
	if bytes.ContainsAny(b, "<>&\u2028\u2029") {
		return false
	}
	s := jscan.Scanner{Buf: b}
	_, ok := s.Value()
	// Invalid, or deeper than jscan.MaxDepth: left to json.Marshal.
	return ok && s.End() && !s.Spaced
}
