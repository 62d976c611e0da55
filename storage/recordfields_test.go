package storage

import (
	"bytes"
	"encoding/json"
	"reflect"
	"testing"

	devsync "cornerbook/sync"
)

// TestEveryRecordFieldTakesTheFastPaths fails when a field is added to
// devsync.Record and one of the hand-written paths does not know it: the
// encoder (Record.AppendJSON) must write it as encoding/json does, the
// push decoder (devsync.DecodePush) must read it as encoding/json does,
// and sameRecord must tell two versions apart by it.
func TestEveryRecordFieldTakesTheFastPaths(t *testing.T) {
	base := devsync.Record{ID: "0190a0b0-0000-7000-8000-000000000001", Kind: "checkin", Athlete: "0190a0b0-0000-7000-8000-000000000002",
		Day: "2026-03-02", At: "2026-03-02T07:00:00Z", Device: "phone", Stamp: devsync.HLC{L: 1000, C: 1}, Body: json.RawMessage(`{"mass_kg":70}`)}
	rt := reflect.TypeOf(base)
	for i := 0; i < rt.NumField(); i++ {
		f := rt.Field(i)
		t.Run(f.Name, func(t *testing.T) {
			changed := base
			v := reflect.ValueOf(&changed).Elem().Field(i)
			switch v.Kind() {
			case reflect.String:
				v.SetString(v.String() + "x")
			case reflect.Int, reflect.Int64:
				v.SetInt(v.Int() + 7)
			case reflect.Bool:
				v.SetBool(!v.Bool())
			case reflect.Struct: // the stamp
				changed.Stamp = devsync.HLC{L: base.Stamp.L + 5, C: base.Stamp.C + 3}
			case reflect.Slice: // the body
				changed.Body = json.RawMessage(`{"mass_kg":71}`)
			default:
				t.Fatalf("field %s of kind %s: teach this test, and the fast paths, the new type", f.Name, v.Kind())
			}
			if sameRecord(&base, &changed) {
				t.Errorf("sameRecord does not compare %s", f.Name)
			}
			want, err := json.Marshal(changed)
			if err != nil {
				t.Fatal(err)
			}
			got, err := changed.AppendJSON(nil)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(got, want) {
				t.Errorf("AppendJSON writes %s\n encoding/json writes %s", got, want)
			}
			push := []byte(`{"device":"phone","mutations":[{"n":1,"op":"upsert","record":` + string(want) + `}]}`)
			var fast, slow devsync.PushRequest
			if !devsync.DecodePush(push, &fast) {
				t.Fatalf("DecodePush gives way on the plain form of a record with %s set", f.Name)
			}
			if err := json.Unmarshal(push, &slow); err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(fast, slow) {
				t.Errorf("DecodePush reads %+v\n encoding/json reads %+v", fast.Mutations[0].Record, slow.Mutations[0].Record)
			}
		})
	}
}
