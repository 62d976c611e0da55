package flags

import (
	"bytes"
	"encoding/json"
	"strconv"
	"unicode/utf8"
)

// decodeSession reads a session body. Sessions are the one kind read over
// the athlete's whole history (the load ratio), so a year of them is most
// of the engine's work; a flat scan of the top-level keys does it without
// reflection. Anything the scan is not sure of (escapes, a key differing
// only in case, a value of the wrong type, nesting) falls back to
// encoding/json, so the result is always what json.Unmarshal gives.
func decodeSession(raw []byte, b *SessionBody) bool {
	if scanSession(raw, b) {
		return true
	}
	*b = SessionBody{}
	return json.Unmarshal(raw, b) == nil
}

var (
	keyMinutes = []byte("minutes")
	keyRPE     = []byte("rpe")
	keyLoadAU  = []byte("load_au")
	keyFocus   = []byte("focus")
)

func scanSession(raw []byte, b *SessionBody) bool {
	*b = SessionBody{}
	i := skipWS(raw, 0)
	if i >= len(raw) || raw[i] != '{' {
		return false
	}
	i = skipWS(raw, i+1)
	if i < len(raw) && raw[i] == '}' {
		return skipWS(raw, i+1) == len(raw)
	}
	for {
		// key
		if i >= len(raw) || raw[i] != '"' {
			return false
		}
		kEnd, esc := scanString(raw, i)
		if kEnd < 0 || esc {
			return false
		}
		key := raw[i+1 : kEnd-1]
		i = skipWS(raw, kEnd)
		if i >= len(raw) || raw[i] != ':' {
			return false
		}
		i = skipWS(raw, i+1)
		vStart := i
		vEnd, ok := skipValue(raw, i)
		if !ok {
			return false
		}
		val := raw[vStart:vEnd]
		switch {
		case bytes.Equal(key, keyMinutes):
			if !setNum(val, &b.Minutes) {
				return false
			}
		case bytes.Equal(key, keyRPE):
			if !setNum(val, &b.RPE) {
				return false
			}
		case bytes.Equal(key, keyLoadAU):
			if !setNum(val, &b.LoadAU) {
				return false
			}
		case bytes.Equal(key, keyFocus):
			if string(val) == "null" {
				break
			}
			if val[0] != '"' {
				return false
			}
			if _, esc := scanString(val, 0); esc {
				return false
			}
			if !utf8.Valid(val) {
				return false // encoding/json replaces invalid bytes with U+FFFD
			}
			b.Focus = string(val[1 : len(val)-1])
		default:
			// encoding/json matches keys case-insensitively: leave such
			// keys to it.
			if bytes.EqualFold(key, keyMinutes) || bytes.EqualFold(key, keyRPE) ||
				bytes.EqualFold(key, keyLoadAU) || bytes.EqualFold(key, keyFocus) {
				return false
			}
		}
		i = skipWS(raw, vEnd)
		if i >= len(raw) {
			return false
		}
		switch raw[i] {
		case ',':
			i = skipWS(raw, i+1)
		case '}':
			return skipWS(raw, i+1) == len(raw)
		default:
			return false
		}
	}
}

func setNum(val []byte, dst *float64) bool {
	if string(val) == "null" {
		return true
	}
	if len(val) == 0 || !(val[0] == '-' || (val[0] >= '0' && val[0] <= '9')) {
		return false
	}
	v, err := strconv.ParseFloat(string(val), 64)
	if err != nil || !validJSONNumber(val) {
		return false
	}
	*dst = v
	return true
}

// validJSONNumber checks the JSON number grammar (ParseFloat accepts more,
// such as "0x1p3", "1_0" or "+1").
func validJSONNumber(s []byte) bool {
	i := 0
	if i < len(s) && s[i] == '-' {
		i++
	}
	if i >= len(s) {
		return false
	}
	if s[i] == '0' {
		i++
	} else if s[i] >= '1' && s[i] <= '9' {
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
		}
	} else {
		return false
	}
	if i < len(s) && s[i] == '.' {
		i++
		if i >= len(s) || s[i] < '0' || s[i] > '9' {
			return false
		}
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
		}
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		if i >= len(s) || s[i] < '0' || s[i] > '9' {
			return false
		}
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
		}
	}
	return i == len(s)
}

func skipWS(b []byte, i int) int {
	for i < len(b) && (b[i] == ' ' || b[i] == '\t' || b[i] == '\n' || b[i] == '\r') {
		i++
	}
	return i
}

// scanString returns the index after the closing quote of the string at
// b[i] (−1 if unterminated or holding a control character) and whether it
// contains escapes.
func scanString(b []byte, i int) (end int, esc bool) {
	for j := i + 1; j < len(b); j++ {
		switch c := b[j]; {
		case c == '"':
			return j + 1, esc
		case c == '\\':
			esc = true
			j++
		case c < 0x20:
			return -1, esc
		}
	}
	return -1, esc
}

// skipValue returns the end of the scalar value at b[i]. Objects and
// arrays are refused (no session field holds one; json decides).
func skipValue(b []byte, i int) (int, bool) {
	if i >= len(b) {
		return 0, false
	}
	switch c := b[i]; {
	case c == '"':
		end, esc := scanString(b, i)
		return end, end > 0 && !esc // escapes: json validates them
	case c == '{' || c == '[':
		return 0, false
	default:
		j := i
		for j < len(b) && b[j] != ',' && b[j] != '}' && b[j] != ' ' && b[j] != '\t' && b[j] != '\n' && b[j] != '\r' {
			j++
		}
		if j == i {
			return 0, false
		}
		lit := string(b[i:j])
		if lit == "true" || lit == "false" || lit == "null" || validJSONNumber(b[i:j]) {
			return j, true
		}
		return 0, false
	}
}
