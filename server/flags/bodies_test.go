package flags

import (
	"encoding/json"
	"reflect"
	"testing"

	"cornerbook/server/records"
)

// The engine's small body shapes must read the same JSON names as the
// record kinds: every field here exists, with the same JSON name and kind
// of value, in the records type.
func TestBodiesMatchRecordKinds(t *testing.T) {
	for _, c := range []struct {
		mine, theirs any
	}{
		{CheckinBody{}, records.Checkin{}}, {JumpBody{}, records.Jump{}}, {RoundBody{}, records.Round{}},
		{SessionBody{}, records.Session{}}, {incidentBody{}, records.Incident{}}, {clearanceBody{}, records.Clearance{}},
		{decisionBody{}, records.Decision{}}, {boutBody{}, records.Bout{}}, {weekBody{}, records.Week{}}, {knotBody{}, records.Knot{}},
	} {
		theirs := map[string]reflect.Type{}
		tt := reflect.TypeOf(c.theirs)
		for i := 0; i < tt.NumField(); i++ {
			f := tt.Field(i)
			theirs[jsonName(f)] = f.Type
		}
		mt := reflect.TypeOf(c.mine)
		for i := 0; i < mt.NumField(); i++ {
			f := mt.Field(i)
			if !f.IsExported() {
				continue // the engine's own bookkeeping, never decoded
			}
			name := jsonName(f)
			typ, ok := theirs[name]
			if !ok {
				t.Errorf("%s.%s: no such field in %s", mt.Name(), name, tt.Name())
				continue
			}
			if base(typ) != base(f.Type) && !(isSlice(typ) && isSlice(f.Type)) {
				t.Errorf("%s.%s: %s here, %s in %s", mt.Name(), name, f.Type, typ, tt.Name())
			}
		}
	}
	// And a full record body decodes into the small shape.
	b, _ := json.Marshal(records.Session{Type: "strength", Focus: "max_strength", Minutes: 60, RPE: 8, LoadAU: 480, Note: "heavy singles"})
	var s SessionBody
	if !decodeSession(b, &s) || s != (SessionBody{Minutes: 60, RPE: 8, LoadAU: 480, Focus: "max_strength"}) {
		t.Errorf("session decoded as %+v", s)
	}
}

func jsonName(f reflect.StructField) string {
	tag := f.Tag.Get("json")
	for i := 0; i < len(tag); i++ {
		if tag[i] == ',' {
			return tag[:i]
		}
	}
	return tag
}

func base(t reflect.Type) reflect.Kind {
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	k := t.Kind()
	if k == reflect.Int || k == reflect.Float64 {
		return reflect.Float64 // numbers either way
	}
	return k
}

func isSlice(t reflect.Type) bool { return t.Kind() == reflect.Slice }
