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
	var seen uint16
	ok := s.Object(func(k []byte) bool {
		var ok bool
		switch string(k) {
		case "device":
			if ok = once(&seen, 1); ok {
				req.Device, ok = s.String()
			}
		case "epoch":
			if ok = once(&seen, 2); ok {
				req.Epoch, ok = s.String()
			}
		case "waiting":
			if ok = once(&seen, 4); ok {
				var v int64
				v, ok = s.Int(64)
				req.Waiting = int(v)
			}
		case "mutations":
			if ok = once(&seen, 8); ok && s.Null() {
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
func once(seen *uint16, bit uint16) bool {
	if *seen&bit != 0 {
		return false
	}
	*seen |= bit
	return true
}

func decodeMutation(s *jscan.Scanner, m *Mutation) bool {
	var seen uint16
	return s.Object(func(k []byte) bool {
		var ok bool
		switch string(k) {
		case "n":
			if ok = once(&seen, 1); ok {
				m.N, ok = s.Uint(64)
			}
		case "op":
			if ok = once(&seen, 2); ok {
				m.Op, ok = s.String()
			}
		case "record":
			ok = once(&seen, 4) && decodeRecord(s, &m.Record)
		}
		return ok
	})
}

func decodeRecord(s *jscan.Scanner, r *Record) bool {
	var seen uint16
	str := func(bit uint16, dst *string) bool {
		var ok bool
		if ok = once(&seen, bit); ok {
			*dst, ok = s.String()
		}
		return ok
	}
	return s.Object(func(k []byte) bool {
		var ok bool
		switch string(k) {
		case "id":
			ok = str(1, &r.ID)
		case "kind":
			ok = str(2, &r.Kind)
		case "athlete":
			ok = str(4, &r.Athlete)
		case "day":
			ok = str(8, &r.Day)
		case "at":
			ok = str(16, &r.At)
		case "device":
			ok = str(32, &r.Device)
		case "stamp":
			ok = once(&seen, 64) && decodeStamp(s, &r.Stamp)
		case "gen":
			if ok = once(&seen, 128); ok {
				var v int64
				v, ok = s.Int(64)
				r.Gen = int(v)
			}
		case "deleted":
			if ok = once(&seen, 256); ok {
				r.Deleted, ok = s.Bool()
			}
		case "body":
			var v []byte
			if ok = once(&seen, 512); ok {
				v, ok = s.Value()
			}
			// encoding/json keeps a literal null: leave it to it.
			if ok = ok && string(v) != "null"; ok {
				r.Body = append([]byte(nil), v...)
			}
		}
		return ok
	})
}

func decodeStamp(s *jscan.Scanner, h *HLC) bool {
	var seen uint16
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
