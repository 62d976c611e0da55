package server

import (
	"errors"
	"net/http"

	"cornerbook/server/auth"
	devsync "cornerbook/sync"
)

type access int

const (
	accessRead  access = iota // any paired device
	accessWrite               // any paired device; the records themselves are checked per kind
	accessCoach               // plans, devices, join codes, backups
)

// principal is who is asking: a paired device, or the coach at the
// laptop itself. Without an auth store (tests of the sync path) every
// caller is the coach.
type principal struct {
	DeviceID string // "" for the laptop and for the open hub
	Role     string // coach, staff or athlete
	Athlete  string // for athlete devices
	dev      *auth.Device
}

var laptop = principal{Role: string(auth.RoleCoach)}

// seesOnly is the athlete whose records alone the caller sees ("" when
// it sees the whole camp).
func (p principal) seesOnly() string {
	if p.Role == string(auth.RoleAthlete) {
		return p.Athlete
	}
	return ""
}

func (s *Server) authorize(r *http.Request, need access) (principal, error) {
	if s.cfg.Auth == nil || auth.FromLaptop(r) {
		return laptop, nil
	}
	dev, err := s.cfg.Auth.Authenticate(auth.BearerToken(r), s.now())
	if err != nil {
		return principal{}, authError(err)
	}
	p := principal{DeviceID: dev.ID, Role: string(dev.Role), Athlete: dev.Athlete, dev: &dev}
	if need == accessCoach {
		if err := auth.RequireCoach(dev); err != nil {
			return principal{}, authError(err)
		}
	}
	return p, nil
}

// authError maps the auth package's errors to user errors.
func authError(err error) error {
	var fe *devsync.FieldError
	var te *auth.ThrottledError
	switch st := auth.Status(err); st {
	case http.StatusTooManyRequests:
		e := userError(CodeThrottled, "", err.Error())
		if errors.As(err, &te) {
			e.RetryAfter = te.RetryAfter
		}
		return e
	case http.StatusUnauthorized:
		return userError(CodeUnauthorized, "", err.Error())
	case http.StatusForbidden:
		field := ""
		if errors.As(err, &fe) {
			field = fe.Field
		}
		return userError(devsync.CodeForbidden, field, reasonOf(err))
	case http.StatusNotFound:
		return userError(CodeNotFound, "", err.Error())
	case http.StatusGone:
		return userError(CodeGone, "code", err.Error())
	case http.StatusConflict:
		return userError(CodeConflict, "", err.Error())
	case http.StatusBadRequest:
		if errors.As(err, &fe) {
			return userError(devsync.CodeBadRequest, fe.Field, fe.Reason)
		}
		return userError(devsync.CodeBadRequest, "", err.Error())
	}
	return err
}

func reasonOf(err error) string {
	var fe *devsync.FieldError
	if errors.As(err, &fe) {
		return fe.Reason
	}
	return err.Error()
}

// canRead filters pulls: athletes' devices see only their own records.
func (p principal) canRead(rec *devsync.Record) bool {
	if p.dev == nil {
		return true
	}
	return auth.CanRead(*p.dev, rec)
}

// maybeSeen picks, among the records canRead hides, those this device may
// have received before: an athlete's device, its own athlete's records (a
// note shared with the athlete and later made staff-only). The store then
// looks at their earlier versions and withdraws those it once sent.
func (p principal) maybeSeen(rec *devsync.Record) bool {
	a := p.seesOnly()
	return a != "" && rec.Athlete == a
}

// allowWrite checks each mutation's record against the caller's rights:
// a record always names the device that pushes it, and a paired device
// writes only the kinds and athletes its role allows, including the
// version it would replace.
func (p principal) allowWrite(device string) func(stored, incoming *devsync.Record) error {
	return func(stored, rec *devsync.Record) error {
		if p.dev == nil {
			if rec.Device != device {
				return devsync.Invalid("device", "must be the pushing device (%s); got %q", device, rec.Device)
			}
			return nil
		}
		err := auth.CanOverwrite(*p.dev, stored, rec)
		var fe *devsync.FieldError
		if err != nil && errors.As(err, &fe) {
			return devsync.Forbidden(fe.Field, "%s", fe.Reason)
		}
		return err
	}
}
