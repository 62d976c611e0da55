package sync

import (
	"strconv"

	"cornerbook/sync/jscan"
)

// DecodePush decodes a push body in its plain form — what every client
// sends: exact field names, each once, no nulls, no escapes outside
// record bodies — into req, which must be zero. It reports false for
// anything else; the caller then decodes the same bytes with
// encoding/json (strictly, unknown fields refused), which accepts the
// rest and names the field of any error. Whatever DecodePush accepts,
// encoding/json decodes to the same value (see the fuzz test). body
// must already be known to be UTF-8.
func DecodePush(body []byte, req *PushRequest) bool {
	s := jscan.Scanner{Buf: body}
	var seen uint16
	ok := s.Object(func(k []byte) bool {
		switch string(k) {
		case "device":
			return once(&seen, 1) && str(&s, &req.Device)
		case "epoch":
			return once(&seen, 2) && str(&s, &req.Epoch)
		case "waiting":
			return once(&seen, 4) && integer(&s, &req.Waiting, strconv.IntSize)
		case "mutations":
			if !once(&seen, 8) {
				return false
			}
			if s.Null() {
				return true // encoding/json leaves the list nil
			}
			req.Mutations = make([]Mutation, 0, 100)
			return s.Array(func() bool {
				req.Mutations = append(req.Mutations, Mutation{})
				return decodeMutation(&s, &req.Mutations[len(req.Mutations)-1])
			})
		}
		return false
	})
	return ok && s.End()
}

// DecodeRecord decodes one record document in its plain form into r,
// which must be zero; false means "decode it with encoding/json", as for
// DecodePush. Strings and the body are copies of b's bytes.
func DecodeRecord(b []byte, r *Record) bool {
	s := jscan.Scanner{Buf: b}
	return decodeRecord(&s, r) && s.End()
}

// once marks bit in seen and reports whether it was clear: a repeated
// key is not plain.
func once(seen *uint16, bit uint16) bool {
	if *seen&bit != 0 {
		return false
	}
	*seen |= bit
	return true
}

// str, boolean, integer and uinteger read one value into a field.
func str(s *jscan.Scanner, dst *string) bool {
	v, ok := s.String()
	*dst = v
	return ok
}

func boolean(s *jscan.Scanner, dst *bool) bool {
	v, ok := s.Bool()
	*dst = v
	return ok
}

func integer[T int | int64](s *jscan.Scanner, dst *T, bits int) bool {
	v, ok := s.Int(bits)
	*dst = T(v)
	return ok
}

func uinteger[T uint32 | uint64](s *jscan.Scanner, dst *T, bits int) bool {
	v, ok := s.Uint(bits)
	*dst = T(v)
	return ok
}

func decodeMutation(s *jscan.Scanner, m *Mutation) bool {
	var seen uint16
	return s.Object(func(k []byte) bool {
		switch string(k) {
		case "n":
			return once(&seen, 1) && uinteger(s, &m.N, 64)
		case "op":
			return once(&seen, 2) && str(s, &m.Op)
		case "record":
			return once(&seen, 4) && decodeRecord(s, &m.Record)
		}
		return false
	})
}

func decodeRecord(s *jscan.Scanner, r *Record) bool {
	var seen uint16
	return s.Object(func(k []byte) bool {
		switch string(k) {
		case "id":
			return once(&seen, 1) && str(s, &r.ID)
		case "kind":
			return once(&seen, 2) && str(s, &r.Kind)
		case "athlete":
			return once(&seen, 4) && str(s, &r.Athlete)
		case "day":
			return once(&seen, 8) && str(s, &r.Day)
		case "at":
			return once(&seen, 16) && str(s, &r.At)
		case "device":
			return once(&seen, 32) && str(s, &r.Device)
		case "stamp":
			return once(&seen, 64) && decodeStamp(s, &r.Stamp)
		case "gen":
			return once(&seen, 128) && integer(s, &r.Gen, strconv.IntSize)
		case "deleted":
			return once(&seen, 256) && boolean(s, &r.Deleted)
		case "body":
			if !once(&seen, 512) {
				return false
			}
			v, ok := s.Value()
			// encoding/json keeps a literal null: leave it to it.
			if !ok || string(v) == "null" {
				return false
			}
			r.Body = append([]byte(nil), v...)
			return true
		}
		return false
	})
}

func decodeStamp(s *jscan.Scanner, h *HLC) bool {
	var seen uint16
	return s.Object(func(k []byte) bool {
		switch string(k) {
		case "l":
			return once(&seen, 1) && integer(s, &h.L, 64)
		case "c":
			return once(&seen, 2) && uinteger(s, &h.C, 32)
		}
		return false
	})
}
