// Package jscan is a small, strict JSON scanner for the hub's fast
// paths: decoding a push and the bodies of the frequent record kinds
// without reflection. It accepts only the plain form of a document —
// exact key spellings, no escapes in keys or decoded strings, no nulls,
// numbers that fit their Go type — and reports anything else as "not
// plain" (ok == false). The caller then decodes the same bytes with
// encoding/json, which accepts or rejects them with its usual error, so
// the fast path never changes what is accepted or how an error reads.
//
// Raw values (Value) are fully validated against RFC 8259 (Bray 2017):
// strings, escapes, numbers, literals, nesting.
package jscan

import "strconv"

// MaxDepth is the deepest nesting Value accepts; deeper documents are
// left to encoding/json.
const MaxDepth = 64

// Scanner reads one JSON document from Buf; Pos is the next byte.
// Spaced records whether any white space was skipped.
type Scanner struct {
	Buf    []byte
	Pos    int
	Spaced bool
}

// Space skips white space (RFC 8259 §2: space, tab, LF, CR).
func (s *Scanner) Space() {
	for s.Pos < len(s.Buf) {
		switch s.Buf[s.Pos] {
		case ' ', '\t', '\n', '\r':
			s.Pos++
			s.Spaced = true
		default:
			return
		}
	}
}

// Byte consumes c (after white space) if it is next.
func (s *Scanner) Byte(c byte) bool {
	s.Space()
	if s.Pos < len(s.Buf) && s.Buf[s.Pos] == c {
		s.Pos++
		return true
	}
	return false
}

// End: nothing but white space is left.
func (s *Scanner) End() bool {
	s.Space()
	return s.Pos == len(s.Buf)
}

// Object calls member for each key of the object that starts next,
// with the scanner just after the key's colon; member must consume the
// value and return false to give up. Keys with escapes are not plain.
func (s *Scanner) Object(member func(key []byte) bool) bool {
	return s.list('{', '}', func() bool {
		k, ok := s.plainString()
		return ok && s.Byte(':') && member(k)
	})
}

// Array calls elem for each element of the array that starts next, with
// the scanner at the element; elem must consume it.
func (s *Scanner) Array(elem func() bool) bool {
	return s.list('[', ']', elem)
}

// list reads open, items separated by commas, close; item starts at the
// item (white space skipped) and must consume it.
func (s *Scanner) list(open, close byte, item func() bool) bool {
	if !s.Byte(open) {
		return false
	}
	if s.Byte(close) {
		return true
	}
	for {
		s.Space()
		if !item() {
			return false
		}
		if !s.Byte(',') {
			return s.Byte(close)
		}
	}
}

// String reads a string without escapes or control characters (the
// caller has checked the document is UTF-8).
func (s *Scanner) String() (string, bool) {
	s.Space()
	b, ok := s.plainString()
	return string(b), ok
}

func (s *Scanner) plainString() ([]byte, bool) {
	if s.Pos >= len(s.Buf) || s.Buf[s.Pos] != '"' {
		return nil, false
	}
	start := s.Pos + 1
	for i := start; i < len(s.Buf); i++ {
		switch c := s.Buf[i]; {
		case c == '"':
			s.Pos = i + 1
			return s.Buf[start:i], true
		case c == '\\' || c < 0x20:
			return nil, false
		}
	}
	return nil, false
}

// Bool reads true or false.
func (s *Scanner) Bool() (v, ok bool) {
	s.Space()
	switch {
	case s.lit("true"):
		return true, true
	case s.lit("false"):
		return false, true
	}
	return false, false
}

// Null consumes a null literal if it is next.
func (s *Scanner) Null() bool {
	s.Space()
	return s.lit("null")
}

func (s *Scanner) lit(l string) bool {
	if len(s.Buf)-s.Pos >= len(l) && string(s.Buf[s.Pos:s.Pos+len(l)]) == l {
		s.Pos += len(l)
		return true
	}
	return false
}

// number consumes a number of RFC 8259 §6's grammar and returns its text.
func (s *Scanner) number() ([]byte, bool) {
	s.Space()
	b, i := s.Buf, s.Pos
	start := i
	if i < len(b) && b[i] == '-' {
		i++
	}
	switch {
	case i < len(b) && b[i] == '0':
		i++
	case i < len(b) && b[i] >= '1' && b[i] <= '9':
		i = digits(b, i)
	default:
		return nil, false
	}
	if i < len(b) && b[i] == '.' {
		d := digits(b, i+1)
		if d == i+1 {
			return nil, false // a fraction needs a digit
		}
		i = d
	}
	if i < len(b) && (b[i] == 'e' || b[i] == 'E') {
		i++
		if i < len(b) && (b[i] == '+' || b[i] == '-') {
			i++
		}
		d := digits(b, i)
		if d == i {
			return nil, false // so does an exponent
		}
		i = d
	}
	s.Pos = i
	return b[start:i], true
}

// digits returns the index after the run of decimal digits at b[i:].
func digits(b []byte, i int) int {
	for i < len(b) && b[i] >= '0' && b[i] <= '9' {
		i++
	}
	return i
}

// Float reads a number that fits a float64.
func (s *Scanner) Float() (float64, bool) {
	v, err := strconv.ParseFloat(s.numberText(), 64)
	return v, err == nil
}

// Int reads a whole number written without fraction or exponent that
// fits in bits bits (what encoding/json accepts for an int field).
func (s *Scanner) Int(bits int) (int64, bool) {
	v, err := strconv.ParseInt(s.numberText(), 10, bits)
	return v, err == nil
}

// Uint is Int for unsigned fields.
func (s *Scanner) Uint(bits int) (uint64, bool) {
	v, err := strconv.ParseUint(s.numberText(), 10, bits)
	return v, err == nil
}

// numberText is the next number's text, "" (which no parser takes) if
// none is next.
func (s *Scanner) numberText() string {
	t, _ := s.number()
	return string(t)
}

// Value consumes any valid JSON value and returns its bytes (without
// surrounding white space).
func (s *Scanner) Value() ([]byte, bool) {
	s.Space()
	start := s.Pos
	if !s.value(0) {
		return nil, false
	}
	return s.Buf[start:s.Pos], true
}

func (s *Scanner) value(depth int) bool {
	if depth > MaxDepth {
		return false
	}
	s.Space()
	if s.Pos >= len(s.Buf) {
		return false
	}
	switch c := s.Buf[s.Pos]; {
	case c == '{':
		return s.list('{', '}', func() bool { return s.str() && s.Byte(':') && s.value(depth+1) })
	case c == '[':
		return s.list('[', ']', func() bool { return s.value(depth + 1) })
	case c == '"':
		return s.str()
	case c == 't':
		return s.lit("true")
	case c == 'f':
		return s.lit("false")
	case c == 'n':
		return s.lit("null")
	}
	_, ok := s.number()
	return ok
}

// str consumes a string with any valid escapes.
func (s *Scanner) str() bool {
	b := s.Buf
	if s.Pos >= len(b) || b[s.Pos] != '"' {
		return false
	}
	for i := s.Pos + 1; i < len(b); i++ {
		switch c := b[i]; {
		case c == '"':
			s.Pos = i + 1
			return true
		case c < 0x20:
			return false
		case c == '\\':
			i++
			if i >= len(b) {
				return false
			}
			switch b[i] {
			case '"', '\\', '/', 'b', 'f', 'n', 'r', 't':
			case 'u':
				if i+4 >= len(b) {
					return false
				}
				for _, h := range b[i+1 : i+5] {
					if !(h >= '0' && h <= '9' || h >= 'a' && h <= 'f' || h >= 'A' && h <= 'F') {
						return false
					}
				}
				i += 4
			default:
				return false
			}
		}
	}
	return false
}
