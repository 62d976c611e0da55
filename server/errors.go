package server

import (
	"encoding/json"
	"errors"
	"log"
	"net/http"
	"strconv"
	"syscall"
	"time"

	devsync "cornerbook/sync"
)

// Error is an answer for the user: a code from the table below, the field
// at fault and a plain-words reason. Anything else a handler returns is an
// internal error: logged, and answered with a generic message.
type Error struct {
	Status int
	Code   string
	Field  string
	Reason string
	// ServerTime is set for CLOCK_SKEW so the device can correct its offset.
	ServerTime int64
	// RetryAfter is set for THROTTLED.
	RetryAfter time.Duration
}

func (e *Error) Error() string { return e.Code + ": " + e.Reason }

// Codes and their HTTP status, in one place.
var statusOf = map[string]int{
	devsync.CodeValidation: http.StatusUnprocessableEntity,
	devsync.CodeBadRequest: http.StatusBadRequest,
	devsync.CodeClockSkew:  http.StatusConflict,
	devsync.CodeForbidden:  http.StatusForbidden,
	CodeUnauthorized:       http.StatusUnauthorized,
	CodeNotFound:           http.StatusNotFound,
	CodeTooLarge:           http.StatusRequestEntityTooLarge,
	CodeThrottled:          http.StatusTooManyRequests,
	CodeUnavailable:        http.StatusServiceUnavailable,
	CodeInternal:           http.StatusInternalServerError,
	CodeGone:               http.StatusGone,
	CodeDiskFull:           http.StatusInsufficientStorage,
	CodeConflict:           http.StatusConflict,
}

// Codes used only at the HTTP edge.
const (
	CodeUnauthorized = "UNAUTHORIZED"
	CodeNotFound     = "NOT_FOUND"
	CodeTooLarge     = "TOO_LARGE"
	CodeThrottled    = "THROTTLED"
	CodeUnavailable  = "UNAVAILABLE"
	CodeInternal     = "INTERNAL"
	CodeGone         = "GONE"      // a used or expired join code
	CodeDiskFull     = "DISK_FULL" // the hub cannot write: nothing was stored
	CodeConflict     = "CONFLICT"  // e.g. the passphrase is already set
)

// Errorf builds a user-facing error.
func userError(code, field, reason string) *Error {
	st, ok := statusOf[code]
	if !ok {
		st = http.StatusBadRequest
	}
	return &Error{Status: st, Code: code, Field: field, Reason: reason}
}

// fromField turns a validation error into a user error.
func fromField(err error) *Error {
	var fe *devsync.FieldError
	if errors.As(err, &fe) {
		return userError(devsync.CodeBadRequest, fe.Field, fe.Reason)
	}
	return nil
}

// handlerFunc is a handler that returns an error; serve writes the answer.
type handlerFunc func(w http.ResponseWriter, r *http.Request) error

func (s *Server) serve(h handlerFunc) http.HandlerFunc {
	return func(w http.ResponseWriter, r *http.Request) {
		err := h(w, r)
		if err == nil {
			return
		}
		var ue *Error
		if !errors.As(err, &ue) {
			if fe := fromField(err); fe != nil {
				ue = fe
			} else if errors.Is(err, syscall.ENOSPC) {
				s.logf("disk full on %s %s: %v", r.Method, r.URL.Path, err)
				ue = userError(CodeDiskFull, "", "the hub laptop's disk is full: nothing was changed, and the entries stay safe on the device until space is freed")
			} else {
				s.logf("internal error on %s %s: %v", r.Method, r.URL.Path, err)
				ue = userError(CodeInternal, "", "the hub hit an internal error; nothing was changed")
			}
		}
		if ue.RetryAfter > 0 {
			w.Header().Set("Retry-After", strconv.Itoa(int(ue.RetryAfter.Seconds()+0.999)))
		}
		writeJSON(w, ue.Status, devsync.ErrorBody{Code: ue.Code, Field: ue.Field, Reason: ue.Reason, ServerTime: ue.ServerTime})
	}
}

func writeJSON(w http.ResponseWriter, status int, v any) {
	w.Header().Set("Content-Type", "application/json; charset=utf-8")
	w.Header().Set("Cache-Control", "no-store")
	w.WriteHeader(status)
	if err := json.NewEncoder(w).Encode(v); err != nil {
		log.Printf("write response: %v", err)
	}
}
