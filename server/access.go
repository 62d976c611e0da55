package server

import (
	"net/http"

	devsync "cornerbook/sync"
)

type access int

const (
	accessRead access = iota
	accessWrite
	accessCoach
)

// principal is who is asking. Without pairing configured every caller is
// the coach; with it, a device token names the device and its role.
type principal struct {
	DeviceID string // "" when the hub runs without pairing
	Role     string // coach, staff or athlete
	Athlete  string // for athlete devices
}

func (s *Server) authorize(r *http.Request, need access) (principal, error) {
	return principal{Role: "coach"}, nil
}

// canRead filters pulls.
func (p principal) canRead(rec *devsync.Record) bool { return true }

// allowWrite checks each mutation's record against the caller's rights.
func (p principal) allowWrite(device string) func(*devsync.Record) error {
	return func(rec *devsync.Record) error {
		if rec.Device != device {
			return devsync.Invalid("record.device", "must be the pushing device (%s); got %q", device, rec.Device)
		}
		return nil
	}
}
