package flags

import (
	"encoding/json"
	"testing"
)

var sessionBodies = []string{
	`{"type":"boxing","minutes":60,"rpe":7}`,
	`{"type":"boxing","minutes":60,"rpe":7,"load_au":420,"focus":"max_strength","note":"felt \"flat\""}`,
	` { "minutes" : 45.5 , "rpe" : 6.5e0 , "focus" : null } `,
	`{}`,
	`{"minutes":60,"rpe":7,"minutes":30}`, // the last duplicate wins
	`{"Minutes":60,"RPE":7}`,              // case-insensitive keys (json's rule)
	`{"minutes":"60","rpe":7}`,            // wrong type: rejected
	`{"minutes":60,"rpe":7,"extra":{"a":[1,2]}}`,  // nesting elsewhere
	`{"minutes":60,"rpe":7,"focus":"sp\u0065ed"}`, // escaped string
	`{"minutes":60,"rpe":7,}`,                     // trailing comma: invalid
	`{"minutes":0x10,"rpe":7}`,                    // not a JSON number
	`{"minutes":-1.5E+2,"rpe":true}`,              // bool into a number: rejected
	`{"minutes":60,"rpe":7} trailing`,             // invalid
	`{"focus":"speed","minutes":1e400}`,           // out of range: rejected
	`[1,2]`, ``, `null`, `{"minutes":60`, `{"minutes"}`, `{"a":"\x01"}`,
	`{"minutes":60,"rpe":7,"note":"tab	inside"}`, // raw control character: invalid
}

// The flat scan must agree with encoding/json on every body, valid or not.
func TestDecodeSessionAgreesWithJSON(t *testing.T) {
	for _, s := range sessionBodies {
		checkSessionDecode(t, s)
	}
}

func checkSessionDecode(t *testing.T, s string) {
	t.Helper()
	var want SessionBody
	wantOK := json.Unmarshal([]byte(s), &want) == nil
	var got SessionBody
	gotOK := decodeSession([]byte(s), &got)
	if gotOK != wantOK || (wantOK && got != want) {
		t.Errorf("%q: got %+v %v, json gives %+v %v", s, got, gotOK, want, wantOK)
	}
}

func FuzzDecodeSession(f *testing.F) {
	for _, s := range sessionBodies {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) { checkSessionDecode(t, s) })
}
