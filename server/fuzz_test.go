package server

import (
	"errors"
	"testing"

	devsync "cornerbook/sync"
)

// FuzzDecodePush: any bytes a device might send decode to a push request
// or to a user error naming a field; never a panic, never an internal error.
func FuzzDecodePush(f *testing.F) {
	f.Add([]byte(`{"device":"phone-1","mutations":[{"n":1,"op":"upsert","record":{"id":"0193a1b2-0000-7000-8000-000000000001","kind":"checkin","athlete":"0193a1b2-0000-7000-8000-000000000002","day":"2026-11-20","at":"2026-11-20T07:10:00+01:00","device":"phone-1","stamp":{"l":1795165200000,"c":0},"body":{"mass_kg":70.2}}}]}`))
	f.Add([]byte(`{"device":"phone-1","mutations":[]}`))
	f.Add([]byte(`{"device":5}`))
	f.Add([]byte(`{"device":"d","mutations":[{"n":-1}]}`))
	f.Add([]byte(`{"device":"d","mutations":[{"n":1,"record":{"stamp":{"l":1e400}}}]}`))
	f.Add([]byte("{\"device\":\"\xff\"}"))
	f.Add([]byte(`[]`))
	f.Add([]byte(``))
	f.Fuzz(func(t *testing.T, data []byte) {
		var req devsync.PushRequest
		err := decodeJSON(data, &req)
		if err == nil {
			return
		}
		var ue *Error
		if !errors.As(err, &ue) {
			t.Fatalf("not a user error: %v", err)
		}
		if ue.Code != devsync.CodeBadRequest || ue.Reason == "" {
			t.Fatalf("unclear error: %+v", ue)
		}
	})
}
