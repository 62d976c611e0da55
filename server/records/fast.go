package records

import (
	"encoding/json"
	"math"
	"reflect"
	"strconv"
	"strings"
	"sync"
	"unicode/utf8"

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

var plans sync.Map // reflect.Type → *bodyPlan (nil: not flat)

// planOf returns the plan of a struct whose fields all have a kind above,
// or nil.
func planOf(t reflect.Type) *bodyPlan {
	if p, ok := plans.Load(t); ok {
		return p.(*bodyPlan)
	}
	p := &bodyPlan{byName: map[string]int{}}
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		name, opts, _ := strings.Cut(f.Tag.Get("json"), ",")
		if !f.IsExported() || name == "" || name == "-" || len(p.fields) == 64 {
			p = nil
			break
		}
		fp := fieldPlan{name: name, index: i, omitEmpty: opts == "omitempty", key: strconv.Quote(name) + ":"}
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
	plans.Store(t, p)
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
func fastDecode(raw []byte, dst any) (present fieldSet, ok bool) {
	v := reflect.ValueOf(dst).Elem()
	p := planOf(v.Type())
	if p == nil || !utf8.Valid(raw) {
		return fieldSet{}, false // encoding/json replaces bad UTF-8; leave it to it
	}
	s := jscan.Scanner{Buf: raw}
	var seen uint64
	var slab []float64 // backing for the pointer fields (slabbed)
	var islab []int
	var bslab []bool
	ok = s.Object(func(k []byte) bool {
		i, known := p.byName[string(k)]
		if !known || seen&(1<<i) != 0 {
			return false
		}
		seen |= 1 << i
		f := &p.fields[i]
		fv := v.Field(f.index)
		var ok bool
		switch f.kind {
		case fString:
			var x string
			if x, ok = s.String(); ok {
				fv.SetString(x)
			}
		case fBool, fBoolPtr:
			var x bool
			if x, ok = s.Bool(); ok {
				setField(fv, f.kind == fBoolPtr, &bslab, p.nBoolPtr, x)
			}
		case fInt, fIntPtr:
			var x int64
			if x, ok = s.Int(strconv.IntSize); ok {
				setField(fv, f.kind == fIntPtr, &islab, p.nIntPtr, int(x))
			}
		case fFloat, fFloatPtr:
			var x float64
			if x, ok = s.Float(); ok {
				setField(fv, f.kind == fFloatPtr, &slab, p.nFloatPtr, x)
			}
		case fFloats:
			xs := make([]float64, 0, 8)
			if ok = s.Array(func() bool {
				x, ok := s.Float()
				xs = append(xs, x)
				return ok
			}); ok {
				fv.Set(reflect.ValueOf(xs))
			}
		}
		return ok
	})
	return fieldSet{plan: p, bits: seen}, ok && s.End()
}

// setField stores x in the addressable field fv of type T, or, when ptr,
// of type *T, pointing into the body's slab of Ts (slabbed).
func setField[T any](fv reflect.Value, ptr bool, slab *[]T, n int, x T) {
	if ptr {
		*fv.Addr().Interface().(**T) = slabbed(slab, n, x)
		return
	}
	*fv.Addr().Interface().(*T) = x
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
// needs what only encoding/json does (escapes, NaN, infinities).
func fastCanonical(v any) (json.RawMessage, bool) {
	rv := reflect.ValueOf(v)
	if rv.Kind() != reflect.Pointer || rv.IsNil() || rv.Elem().Kind() != reflect.Struct {
		return nil, false
	}
	rv = rv.Elem()
	p := planOf(rv.Type())
	if p == nil {
		return nil, false
	}
	out := make([]byte, 0, 160)
	out = append(out, '{')
	first := true
	for i := range p.fields {
		f := &p.fields[i]
		fv := rv.Field(f.index)
		if f.omitEmpty && emptyField(f.kind, fv) {
			continue
		}
		if !first {
			out = append(out, ',')
		}
		first = false
		out = append(out, f.key...)
		var ok bool
		if out, ok = appendField(out, f.kind, fv); !ok {
			return nil, false
		}
	}
	return append(out, '}'), true
}

func emptyField(k fieldKind, v reflect.Value) bool {
	switch k {
	case fString:
		return v.Len() == 0
	case fBool:
		return !v.Bool()
	case fInt:
		return v.Int() == 0
	case fFloat:
		return v.Float() == 0
	case fFloats:
		return v.Len() == 0
	}
	return v.IsNil()
}

func appendField(out []byte, k fieldKind, v reflect.Value) ([]byte, bool) {
	switch k {
	case fString:
		s := v.String()
		if !plainText(s) {
			return nil, false
		}
		out = append(out, '"')
		out = append(out, s...)
		return append(out, '"'), true
	case fBool:
		return strconv.AppendBool(out, v.Bool()), true
	case fInt:
		return strconv.AppendInt(out, v.Int(), 10), true
	case fFloat:
		return appendFloat(out, v.Float())
	case fFloats:
		if v.IsNil() {
			return append(out, "null"...), true
		}
		out = append(out, '[')
		for i := 0; i < v.Len(); i++ {
			if i > 0 {
				out = append(out, ',')
			}
			var ok bool
			if out, ok = appendFloat(out, v.Index(i).Float()); !ok {
				return nil, false
			}
		}
		return append(out, ']'), true
	}
	if v.IsNil() {
		return append(out, "null"...), true
	}
	switch k {
	case fIntPtr:
		return appendField(out, fInt, v.Elem())
	case fFloatPtr:
		return appendField(out, fFloat, v.Elem())
	}
	return appendField(out, fBool, v.Elem())
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
