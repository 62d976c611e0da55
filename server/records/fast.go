package records

import (
	"encoding/json"
	"math"
	"reflect"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"unicode/utf8"
	"unsafe"

	"cornerbook/sync/jscan"
)

// The fast path for flat bodies (every kind but settings and bout,
// whose fields nest): decoding and canonical encoding by a plan made once per type,
// without encoding/json's reflection walk. It takes only the plain form —
// exact names, each once, no nulls, no escapes in text — and gives way to
// decodeBody's standard path for anything else, so what is accepted and
// every error message stay the standard path's. The fuzz tests hold the
// two paths to the same result.

type fieldKind uint8

const (
	fString fieldKind = iota + 1
	fBool
	fInt
	fFloat
	fIntPtr
	fFloatPtr
	fBoolPtr
	fFloats
)

type fieldPlan struct {
	name      string
	index     int
	offset    uintptr // of the field in its struct: read and written through it, without reflect
	kind      fieldKind
	omitEmpty bool
	key       string // `"name":`
}

type bodyPlan struct {
	fields []fieldPlan
	byName map[string]int
	// how many pointer fields of each kind: the size of their slabs
	nFloatPtr, nIntPtr, nBoolPtr int
}

// plans maps reflect.Type → *bodyPlan (nil: not flat). Readers load the
// map without a lock; a new type copies it under plansMu (a handful of
// body types, each planned once).
var (
	plans   atomic.Pointer[map[reflect.Type]*bodyPlan]
	plansMu sync.Mutex
)

// planOf returns the plan of a struct whose fields all have a kind above,
// or nil.
func planOf(t reflect.Type) *bodyPlan {
	if m := plans.Load(); m != nil {
		if p, ok := (*m)[t]; ok {
			return p
		}
	}
	p := makePlan(t)
	plansMu.Lock()
	defer plansMu.Unlock()
	next := map[reflect.Type]*bodyPlan{t: p}
	if m := plans.Load(); m != nil {
		for k, v := range *m {
			next[k] = v
		}
	}
	plans.Store(&next)
	return p
}

func makePlan(t reflect.Type) *bodyPlan {
	p := &bodyPlan{byName: map[string]int{}}
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		name, opts, _ := strings.Cut(f.Tag.Get("json"), ",")
		if !f.IsExported() || name == "" || name == "-" || len(p.fields) == 64 {
			p = nil
			break
		}
		fp := fieldPlan{name: name, index: i, offset: f.Offset, omitEmpty: opts == "omitempty", key: strconv.Quote(name) + ":"}
		switch ft := f.Type; {
		case ft.Kind() == reflect.String:
			fp.kind = fString
		case ft.Kind() == reflect.Bool:
			fp.kind = fBool
		case ft.Kind() == reflect.Int:
			fp.kind = fInt
		case ft.Kind() == reflect.Float64:
			fp.kind = fFloat
		case ft.Kind() == reflect.Pointer && ft.Elem().Kind() == reflect.Int:
			fp.kind = fIntPtr
		case ft.Kind() == reflect.Pointer && ft.Elem().Kind() == reflect.Float64:
			fp.kind = fFloatPtr
		case ft.Kind() == reflect.Pointer && ft.Elem().Kind() == reflect.Bool:
			fp.kind = fBoolPtr
		case ft.Kind() == reflect.Slice && ft.Elem().Kind() == reflect.Float64:
			fp.kind = fFloats
		}
		// Named types (which may have JSON methods of their own) and other
		// tag options are left to encoding/json.
		if fp.kind == 0 || opts != "" && opts != "omitempty" || !builtin(f.Type) {
			p = nil
			break
		}
		p.byName[name] = len(p.fields)
		p.fields = append(p.fields, fp)
		switch fp.kind {
		case fFloatPtr:
			p.nFloatPtr++
		case fIntPtr:
			p.nIntPtr++
		case fBoolPtr:
			p.nBoolPtr++
		}
	}
	return p
}

// builtin: a predeclared type, or a pointer to or slice of one.
func builtin(t reflect.Type) bool {
	if t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice {
		t = t.Elem()
	}
	return t.PkgPath() == "" && t.Name() != ""
}

// fastDecode decodes a plain flat body into the struct dst points to and
// returns the top-level fields present; ok is false when the body is not
// in the plain form (dst is then left partly filled).
//
// Fields are written through the offsets of the type's plan: the plan
// was made from the type by reflect, and each kind below is written only
// as the Go type planOf matched it to, so every store has the field's own
// type.
func fastDecode(raw []byte, dst any) (present fieldSet, ok bool) {
	rv := reflect.ValueOf(dst)
	if rv.Kind() != reflect.Pointer || rv.IsNil() || rv.Elem().Kind() != reflect.Struct {
		return fieldSet{}, false
	}
	p := planOf(rv.Type().Elem())
	if p == nil || !utf8.Valid(raw) {
		return fieldSet{}, false // encoding/json replaces bad UTF-8; leave it to it
	}
	base := rv.UnsafePointer()
	s := jscan.Scanner{Buf: raw}
	var seen uint64
	var slab []float64 // backing for the pointer fields (slabbed)
	var islab []int
	var bslab []bool
	next := 0 // bodies written by the app list fields in struct order: try that one first
	ok = s.Object(func(k []byte) bool {
		i := next
		if i >= len(p.fields) || p.fields[i].name != string(k) {
			var known bool
			if i, known = p.byName[string(k)]; !known {
				return false
			}
		}
		if seen&(1<<i) != 0 {
			return false
		}
		seen |= 1 << i
		next = i + 1
		f := &p.fields[i]
		at := unsafe.Add(base, f.offset)
		var ok bool
		switch f.kind {
		case fString:
			*(*string)(at), ok = s.String()
		case fBool:
			*(*bool)(at), ok = s.Bool()
		case fBoolPtr:
			var x bool
			if x, ok = s.Bool(); ok {
				*(**bool)(at) = slabbed(&bslab, p.nBoolPtr, x)
			}
		case fInt, fIntPtr:
			var x int64
			if x, ok = s.Int(strconv.IntSize); ok {
				if f.kind == fInt {
					*(*int)(at) = int(x)
				} else {
					*(**int)(at) = slabbed(&islab, p.nIntPtr, int(x))
				}
			}
		case fFloat:
			*(*float64)(at), ok = s.Float()
		case fFloatPtr:
			var x float64
			if x, ok = s.Float(); ok {
				*(**float64)(at) = slabbed(&slab, p.nFloatPtr, x)
			}
		case fFloats:
			xs := make([]float64, 0, 8)
			if ok = s.Array(func() bool {
				x, ok := s.Float()
				xs = append(xs, x)
				return ok
			}); ok {
				*(*[]float64)(at) = xs
			}
		}
		return ok
	})
	return fieldSet{plan: p, bits: seen}, ok && s.End()
}

// slabbed appends x to *slab (made with room for n the first time) and
// returns a pointer to it: one allocation for all the pointer fields of a
// kind in a body, rather than one each. The slab never outgrows n (each
// field is read once), so earlier pointers stay valid.
func slabbed[T any](slab *[]T, n int, x T) *T {
	if *slab == nil {
		*slab = make([]T, 0, n)
	}
	*slab = append(*slab, x)
	return &(*slab)[len(*slab)-1]
}

// fastCanonical writes v (a pointer to a flat struct) as canonical would:
// struct order, omitempty, no HTML escaping. ok is false when a value
// needs what only encoding/json does (escapes, NaN, infinities). Fields
// are read through the plan's offsets, as fastDecode writes them.
func fastCanonical(v any) (json.RawMessage, bool) {
	rv := reflect.ValueOf(v)
	if rv.Kind() != reflect.Pointer || rv.IsNil() || rv.Elem().Kind() != reflect.Struct {
		return nil, false
	}
	p := planOf(rv.Type().Elem())
	if p == nil {
		return nil, false
	}
	base := rv.UnsafePointer()
	out := make([]byte, 0, 160)
	out = append(out, '{')
	first := true
	for i := range p.fields {
		f := &p.fields[i]
		at := unsafe.Add(base, f.offset)
		if f.omitEmpty && emptyField(f.kind, at) {
			continue
		}
		if !first {
			out = append(out, ',')
		}
		first = false
		out = append(out, f.key...)
		var ok bool
		if out, ok = appendField(out, f.kind, at); !ok {
			return nil, false
		}
	}
	return append(out, '}'), true
}

// emptyField: the field at at, of kind k, is what omitempty leaves out.
func emptyField(k fieldKind, at unsafe.Pointer) bool {
	switch k {
	case fString:
		return len(*(*string)(at)) == 0
	case fBool:
		return !*(*bool)(at)
	case fInt:
		return *(*int)(at) == 0
	case fFloat:
		return *(*float64)(at) == 0
	case fFloats:
		return len(*(*[]float64)(at)) == 0
	case fIntPtr:
		return *(**int)(at) == nil
	case fFloatPtr:
		return *(**float64)(at) == nil
	}
	return *(**bool)(at) == nil
}

// appendField writes the field at at, of kind k.
func appendField(out []byte, k fieldKind, at unsafe.Pointer) ([]byte, bool) {
	switch k {
	case fString:
		s := *(*string)(at)
		if !plainText(s) {
			return nil, false
		}
		out = append(out, '"')
		out = append(out, s...)
		return append(out, '"'), true
	case fBool:
		return strconv.AppendBool(out, *(*bool)(at)), true
	case fInt:
		return strconv.AppendInt(out, int64(*(*int)(at)), 10), true
	case fFloat:
		return appendFloat(out, *(*float64)(at))
	case fFloats:
		xs := *(*[]float64)(at)
		if xs == nil {
			return append(out, "null"...), true
		}
		out = append(out, '[')
		for i, x := range xs {
			if i > 0 {
				out = append(out, ',')
			}
			var ok bool
			if out, ok = appendFloat(out, x); !ok {
				return nil, false
			}
		}
		return append(out, ']'), true
	case fIntPtr:
		if x := *(**int)(at); x != nil {
			return appendField(out, fInt, unsafe.Pointer(x))
		}
	case fFloatPtr:
		if x := *(**float64)(at); x != nil {
			return appendField(out, fFloat, unsafe.Pointer(x))
		}
	case fBoolPtr:
		if x := *(**bool)(at); x != nil {
			return appendField(out, fBool, unsafe.Pointer(x))
		}
	}
	return append(out, "null"...), true
}

// appendFloat formats a float64 exactly as encoding/json does: the
// shortest representation, in exponent form below 1e-6 and from 1e21,
// with a one-digit negative exponent written without its leading zero.
func appendFloat(out []byte, f float64) ([]byte, bool) {
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return nil, false
	}
	format := byte('f')
	if a := math.Abs(f); a != 0 && (a < 1e-6 || a >= 1e21) {
		format = 'e'
	}
	out = strconv.AppendFloat(out, f, format, -1, 64)
	if format == 'e' {
		if n := len(out); n >= 4 && out[n-4] == 'e' && out[n-3] == '-' && out[n-2] == '0' {
			out[n-2] = out[n-1]
			out = out[:n-1]
		}
	}
	return out, true
}

// plainText: UTF-8 text that encoding/json writes as it is when HTML
// escaping is off (no quote, backslash, control character, U+2028 or
// U+2029).
func plainText(s string) bool {
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c < 0x20 || c == '"' || c == '\\' {
			return false
		}
		if c == 0xe2 && i+2 < len(s) && s[i+1] == 0x80 && s[i+2]&^1 == 0xa8 {
			return false
		}
	}
	return utf8.ValidString(s)
}
