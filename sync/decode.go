package sync

import "cornerbook/sync/jscan"

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
	var seen uint8
	ok := s.Object(func(k []byte) bool {
		var ok bool
		switch string(k) {
		case "device":
			if ok = once(&seen, 1); ok {
				req.Device, ok = s.String()
			}
		case "epoch":
			ok = once(&seen, 2)
			if ok {
				req.Epoch, ok = s.String()
			}
		case "waiting":
			ok = once(&seen, 4)
			if ok {
				var v int64
				v, ok = s.Int(64)
				req.Waiting = int(v)
			}
		case "mutations":
			ok = once(&seen, 8)
			if ok && s.Null() {
				return true // encoding/json leaves the list nil
			}
			if ok {
				req.Mutations = make([]Mutation, 0, 100)
				ok = s.Array(func() bool {
					req.Mutations = append(req.Mutations, Mutation{})
					return decodeMutation(&s, &req.Mutations[len(req.Mutations)-1])
				})
			}
		}
		return ok
	})
	return ok && s.End()
}

// once marks bit in seen and reports whether it was clear: a repeated
// key is not plain.
func once(seen *uint8, bit uint8) bool {
	if *seen&bit != 0 {
		return false
	}
	*seen |= bit
	return true
}

func decodeMutation(s *jscan.Scanner, m *Mutation) bool {
	var seen uint8
	return s.Object(func(k []byte) bool {
		switch string(k) {
		case "n":
			var ok bool
			if ok = once(&seen, 1); ok {
				m.N, ok = s.Uint(64)
			}
			return ok
		case "op":
			var ok bool
			if ok = once(&seen, 2); ok {
				m.Op, ok = s.String()
			}
			return ok
		case "record":
			return once(&seen, 4) && decodeRecord(s, &m.Record)
		}
		return false
	})
}

func decodeRecord(s *jscan.Scanner, r *Record) bool {
	var seen uint16
	str := func(bit uint16, dst *string) bool {
		if seen&bit != 0 {
			return false
		}
		seen |= bit
		var ok bool
		*dst, ok = s.String()
		return ok
	}
	return s.Object(func(k []byte) bool {
		switch string(k) {
		case "id":
			return str(1, &r.ID)
		case "kind":
			return str(2, &r.Kind)
		case "athlete":
			return str(4, &r.Athlete)
		case "day":
			return str(8, &r.Day)
		case "at":
			return str(16, &r.At)
		case "device":
			return str(32, &r.Device)
		}
		var bit uint16
		switch string(k) {
		case "stamp":
			bit = 64
		case "gen":
			bit = 128
		case "deleted":
			bit = 256
		case "body":
			bit = 512
		default:
			return false
		}
		if seen&bit != 0 {
			return false
		}
		seen |= bit
		var ok bool
		switch bit {
		case 64:
			ok = decodeStamp(s, &r.Stamp)
		case 128:
			var v int64
			v, ok = s.Int(64)
			r.Gen = int(v)
		case 256:
			r.Deleted, ok = s.Bool()
		case 512:
			var v []byte
			v, ok = s.Value()
			if ok && string(v) == "null" {
				return false // encoding/json keeps the literal null: leave it to it
			}
			r.Body = append([]byte(nil), v...)
		}
		return ok
	})
}

func decodeStamp(s *jscan.Scanner, h *HLC) bool {
	var seen uint8
	return s.Object(func(k []byte) bool {
		var ok bool
		switch string(k) {
		case "l":
			if ok = once(&seen, 1); ok {
				h.L, ok = s.Int(64)
			}
		case "c":
			if ok = once(&seen, 2); ok {
				var v uint64
				v, ok = s.Uint(32)
				h.C = uint32(v)
			}
		}
		return ok
	})
}
