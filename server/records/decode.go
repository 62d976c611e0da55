package records

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"math"
	"reflect"
	"sort"
	"strconv"
	"strings"
	"sync"
	"unicode/utf8"

	devsync "cornerbook/sync"
)

// fe builds the *devsync.FieldError every check returns.
func fe(field, format string, args ...any) *devsync.FieldError {
	return devsync.Invalid(field, format, args...).(*devsync.FieldError)
}

// fmtNum writes a number the way a coach would type it: no exponent, no
// trailing zeros.
func fmtNum(v float64) string {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

// decodeBody decodes raw into the struct pointed to by dst, rejecting
// unknown fields and wrong types with the JSON path of the offending
// value ("body.path[2].mass_kg"). It also reports which top-level fields
// were present and not null, so a check can say "is required" rather
// than "got 0".
func decodeBody(raw json.RawMessage, dst any, kind string) (fieldSet, error) {
	if len(bytes.TrimSpace(raw)) == 0 || string(bytes.TrimSpace(raw)) == "null" {
		raw = json.RawMessage("{}")
	}
	// Flat bodies in their plain form take the fast path (bout and
	// settings have nested fields and no plan).
	if present, ok := fastDecode(raw, dst); ok {
		return present, nil
	}
	reflect.ValueOf(dst).Elem().SetZero()
	keys, err := slowDecodeBody(raw, dst, kind)
	return fieldSet{names: keys}, err
}

// fieldSet tells which top-level fields of a body were present and not
// null: a bit per field of the type's plan (fast path) or a map of names.
type fieldSet struct {
	plan  *bodyPlan
	bits  uint64
	names map[string]bool
}

func (s fieldSet) has(name string) bool {
	if s.plan != nil {
		i, ok := s.plan.byName[name]
		return ok && s.bits&(1<<i) != 0
	}
	return s.names[name]
}

// slowDecodeBody is decodeBody by encoding/json, for any input.
func slowDecodeBody(raw json.RawMessage, dst any, kind string) (map[string]bool, error) {
	t := reflect.TypeOf(dst).Elem()
	// Rare kinds with nested objects (bout paths and weeks, settings maps)
	// are walked first, so every nested field is spelled exactly. The
	// frequent flat kinds take the fast path: one standard decode, then an
	// exact check of the top-level names; the walker runs only to name
	// the field of an error.
	if kind == KindBout || kind == KindSettings || kind == KindAthlete {
		if err := walk(raw, t, "body", kind); err != nil {
			return nil, err
		}
	}
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	if err := dec.Decode(dst); err != nil {
		if werr := walk(raw, t, "body", kind); werr != nil {
			return nil, werr
		}
		return nil, jsonError(err, kind)
	}
	if _, err := dec.Token(); !errors.Is(err, io.EOF) {
		return nil, fe("body", "must be one JSON object; found more after it")
	}
	keys := topKeys(raw)
	fields := fieldsOf(t)
	for k := range keys {
		if _, ok := fields.types[k]; !ok {
			// The standard decoder matches names case-insensitively; we
			// do not, so a field is spelled one way only.
			return nil, fe("body."+k, "is not a field of a %s record (known: %s)", kind, strings.Join(fields.names, ", "))
		}
	}
	return keys, nil
}

// topKeys lists the top-level keys of a JSON object already known to be
// valid, each mapped to whether its value is not null.
func topKeys(raw []byte) map[string]bool {
	keys := map[string]bool{}
	i := skipSpace(raw, 0)
	if i >= len(raw) || raw[i] != '{' {
		return keys
	}
	i++
	for {
		i = skipSpace(raw, i)
		if i >= len(raw) || raw[i] != '"' {
			return keys
		}
		ks := i
		i = skipString(raw, i)
		key := string(raw[ks+1 : i-1])
		if bytes.IndexByte(raw[ks:i], '\\') >= 0 || !utf8.Valid(raw[ks:i]) {
			_ = json.Unmarshal(raw[ks:i], &key)
		}
		i = skipSpace(raw, i)
		if i >= len(raw) || raw[i] != ':' {
			return keys
		}
		i = skipSpace(raw, i+1)
		vs := i
		i = skipValue(raw, i)
		keys[key] = string(raw[vs:i]) != "null"
		i = skipSpace(raw, i)
		if i >= len(raw) || raw[i] != ',' {
			return keys
		}
		i++
	}
}

func skipSpace(b []byte, i int) int {
	for i < len(b) && (b[i] == ' ' || b[i] == '\t' || b[i] == '\n' || b[i] == '\r') {
		i++
	}
	return i
}

// skipString returns the index after the string starting at b[i] == '"'.
func skipString(b []byte, i int) int {
	for i++; i < len(b); i++ {
		switch b[i] {
		case '\\':
			i++
		case '"':
			return i + 1
		}
	}
	return len(b)
}

// skipValue returns the index after the value starting at b[i].
func skipValue(b []byte, i int) int {
	if i >= len(b) {
		return i
	}
	switch b[i] {
	case '"':
		return skipString(b, i)
	case '{', '[':
		depth := 0
		for i < len(b) {
			switch b[i] {
			case '"':
				i = skipString(b, i)
				continue
			case '{', '[':
				depth++
			case '}', ']':
				depth--
				if depth == 0 {
					return i + 1
				}
			}
			i++
		}
		return i
	}
	for i < len(b) && b[i] != ',' && b[i] != '}' && b[i] != ']' && b[i] != ' ' && b[i] != '\t' && b[i] != '\n' && b[i] != '\r' {
		i++
	}
	return i
}

// jsonError turns a decoder error into a FieldError (the walker normally
// catches these first, with a better path).
func jsonError(err error, kind string) error {
	var te *json.UnmarshalTypeError
	var se *json.SyntaxError
	switch {
	case errors.As(err, &te):
		field := "body"
		if te.Field != "" {
			field += "." + te.Field
		}
		return fe(field, "must be %s; got %s", typeWords(te.Type), te.Value)
	case errors.As(err, &se):
		return fe("body", "is not valid JSON (%s)", se.Error())
	case strings.HasPrefix(err.Error(), "json: unknown field "):
		name, _ := strconv.Unquote(strings.TrimPrefix(err.Error(), "json: unknown field "))
		return fe("body."+name, "is not a field of a %s record", kind)
	}
	return fe("body", "could not be read: %v", err)
}

func typeWords(t reflect.Type) string {
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	switch t.Kind() {
	case reflect.Int, reflect.Int64, reflect.Int32:
		return "a whole number"
	case reflect.Float64, reflect.Float32:
		return "a number"
	case reflect.String:
		return "text in quotes"
	case reflect.Bool:
		return "true or false"
	case reflect.Slice:
		return "a list [ … ]"
	case reflect.Struct, reflect.Map:
		return "an object { … }"
	}
	return t.String()
}

type structFields struct {
	types map[string]reflect.Type // JSON name → field type
	names []string                // JSON names in struct order
}

var fieldCache sync.Map // reflect.Type → *structFields

// fieldsOf maps a struct's JSON names to their field types.
func fieldsOf(t reflect.Type) *structFields {
	if f, ok := fieldCache.Load(t); ok {
		return f.(*structFields)
	}
	sf := &structFields{types: map[string]reflect.Type{}}
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		if !f.IsExported() {
			continue
		}
		name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		if name == "-" {
			continue
		}
		if name == "" {
			name = f.Name
		}
		sf.types[name] = f.Type
		sf.names = append(sf.names, name)
	}
	fieldCache.Store(t, sf)
	return sf
}

// walk checks that raw has the shape of type t, naming the first field
// that does not (unknown field, wrong type, number out of range).
func walk(raw json.RawMessage, t reflect.Type, path, kind string) error {
	raw = bytes.TrimSpace(raw)
	if string(raw) == "null" {
		return nil
	}
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	got := func() string {
		switch {
		case len(raw) == 0:
			return "nothing"
		case raw[0] == '{':
			return "an object"
		case raw[0] == '[':
			return "a list"
		case raw[0] == '"':
			return "text " + string(raw)
		case raw[0] == 't' || raw[0] == 'f':
			return string(raw)
		}
		return string(raw)
	}
	wrong := func() error { return fe(path, "must be %s; got %s", typeWords(t), got()) }
	switch t.Kind() {
	case reflect.Struct:
		var obj map[string]json.RawMessage
		if len(raw) == 0 || raw[0] != '{' || json.Unmarshal(raw, &obj) != nil {
			if path == "body" {
				return fe(path, "must be a JSON object { … } with the fields of a %s record; got %s", kind, got())
			}
			return wrong()
		}
		sf := fieldsOf(t)
		fields, names := sf.types, sf.names
		keys := make([]string, 0, len(obj))
		for k := range obj {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			ft, ok := fields[k]
			if !ok {
				// The standard decoder matches names case-insensitively; we
				// do not, so a field is spelled one way only.
				return fe(path+"."+k, "is not a field of %s (known: %s)", kindOrPart(kind, path), strings.Join(names, ", "))
			}
			if err := walk(obj[k], ft, path+"."+k, kind); err != nil {
				return err
			}
		}
	case reflect.Map:
		var obj map[string]json.RawMessage
		if len(raw) == 0 || raw[0] != '{' || json.Unmarshal(raw, &obj) != nil {
			return wrong()
		}
		keys := make([]string, 0, len(obj))
		for k := range obj {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			if err := walk(obj[k], t.Elem(), path+"."+k, kind); err != nil {
				return err
			}
		}
	case reflect.Slice:
		var arr []json.RawMessage
		if len(raw) == 0 || raw[0] != '[' || json.Unmarshal(raw, &arr) != nil {
			return wrong()
		}
		for i, el := range arr {
			if err := walk(el, t.Elem(), path+"["+strconv.Itoa(i)+"]", kind); err != nil {
				return err
			}
		}
	case reflect.String:
		var s string
		if len(raw) == 0 || raw[0] != '"' || json.Unmarshal(raw, &s) != nil {
			return wrong()
		}
	case reflect.Bool:
		if string(raw) != "true" && string(raw) != "false" {
			return wrong()
		}
	case reflect.Float64:
		var f float64
		if len(raw) == 0 || !(raw[0] == '-' || raw[0] >= '0' && raw[0] <= '9') {
			return wrong()
		}
		if err := json.Unmarshal(raw, &f); err != nil {
			return fe(path, "must be a number of a sensible size; got %s", got())
		}
	case reflect.Int:
		var i int
		if len(raw) == 0 || !(raw[0] == '-' || raw[0] >= '0' && raw[0] <= '9') {
			return wrong()
		}
		if err := json.Unmarshal(raw, &i); err != nil {
			return fe(path, "must be a whole number; got %s", got())
		}
	}
	return nil
}

func kindOrPart(kind, path string) string {
	if path == "body" {
		return "a " + kind + " record"
	}
	return strings.TrimPrefix(path, "body.")
}

// canonical marshals a body: struct field order, sorted map keys, no
// HTML escaping, no trailing newline. The same body always gives the
// same bytes, which the last-writer-wins tie-break relies on.
func canonical(v any) (json.RawMessage, error) {
	if out, ok := fastCanonical(v); ok {
		return out, nil
	}
	return slowCanonical(v)
}

func slowCanonical(v any) (json.RawMessage, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return nil, fe("body", "could not be written back: %v", err)
	}
	return json.RawMessage(bytes.TrimRight(buf.Bytes(), "\n")), nil
}
