// Package jsonenc writes Go values as JSON, byte for byte as encoding/json's
// Marshal does for the kinds of values the engine returns (structs with
// json tags, pointers, slices, string-keyed maps, strings, numbers, bools,
// interfaces and json.Marshaler-style MarshalJSON methods), without
// encoding/json, which is about a tenth of the WebAssembly engine.
//
// Supported tag options are a field name, "-" and "omitempty"; untagged
// fields use the Go name, unexported fields are skipped, and the fields of
// untagged embedded structs are promoted as encoding/json does. []byte
// (base64 in encoding/json) and non-string map keys are reported as errors
// rather than written differently. A NaN or ±Inf number
// is an error, as in encoding/json.
package jsonenc

import (
	"math"
	"reflect"
	"strconv"
	"strings"
	"sync"
	"unicode/utf8"
)

// Marshaler is implemented by values that write their own JSON, as for
// encoding/json. The output is inserted as is: it must be valid, compact
// JSON with HTML-sensitive characters escaped (as encoding/json writes it).
type Marshaler interface {
	MarshalJSON() ([]byte, error)
}

// Raw is JSON text that is inserted as is (encoding/json's RawMessage for
// compact text). A nil or empty Raw is written as null.
type Raw []byte

// MarshalJSON returns r, or null for an empty r.
func (r Raw) MarshalJSON() ([]byte, error) {
	if len(r) == 0 {
		return []byte("null"), nil
	}
	return r, nil
}

// Marshal returns the JSON encoding of v.
func Marshal(v any) ([]byte, error) {
	return Append(nil, v)
}

// Append appends the JSON encoding of v to b. On error the returned slice
// is nil.
func Append(b []byte, v any) ([]byte, error) {
	b, err := appendValue(b, reflect.ValueOf(v))
	if err != nil {
		return nil, err
	}
	return b, nil
}

// Error says what could not be written and where (a path of field names,
// map keys and indexes from the top value).
type Error struct {
	Path   string
	Reason string
}

func (e *Error) Error() string {
	if e.Path == "" {
		return "jsonenc: " + e.Reason
	}
	return "jsonenc: at " + e.Path + ": " + e.Reason
}

// within prefixes the path of an *Error with the step to the value that
// holds it; paths are built only on the way out of a failure.
func within(err error, step string) error {
	if e, ok := err.(*Error); ok {
		e.Path = step + e.Path
	}
	return err
}

func appendValue(b []byte, v reflect.Value) ([]byte, error) {
	if !v.IsValid() {
		return append(b, "null"...), nil
	}
	t := v.Type()
	// Only a type with methods can be a Marshaler; asking the others would
	// box every number of a series.
	if t.NumMethod() > 0 && v.CanInterface() {
		if k := t.Kind(); (k == reflect.Pointer || k == reflect.Interface) && v.IsNil() {
			return append(b, "null"...), nil
		}
		if m, ok := v.Interface().(Marshaler); ok {
			out, err := m.MarshalJSON()
			if err != nil {
				return nil, &Error{"", "MarshalJSON of " + t.String() + ": " + err.Error()}
			}
			return append(b, out...), nil
		}
	}
	switch t.Kind() {
	case reflect.Bool:
		return strconv.AppendBool(b, v.Bool()), nil
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return strconv.AppendInt(b, v.Int(), 10), nil
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		return strconv.AppendUint(b, v.Uint(), 10), nil
	case reflect.Float32, reflect.Float64:
		return appendFloat(b, v.Float(), t.Bits())
	case reflect.String:
		return AppendString(b, v.String()), nil
	case reflect.Interface, reflect.Pointer:
		if v.IsNil() {
			return append(b, "null"...), nil
		}
		return appendValue(b, v.Elem())
	case reflect.Slice:
		if t.Elem().Kind() == reflect.Uint8 {
			return nil, &Error{"", "[]byte is not supported (encoding/json writes base64)"}
		}
		if v.IsNil() {
			return append(b, "null"...), nil
		}
		fallthrough
	case reflect.Array:
		b = append(b, '[')
		for i := 0; i < v.Len(); i++ {
			if i > 0 {
				b = append(b, ',')
			}
			var err error
			if b, err = appendValue(b, v.Index(i)); err != nil {
				return nil, within(err, "["+strconv.Itoa(i)+"]")
			}
		}
		return append(b, ']'), nil
	case reflect.Map:
		if t.Key().Kind() != reflect.String {
			return nil, &Error{"", "map key type " + t.Key().String() + " is not supported"}
		}
		if v.IsNil() {
			return append(b, "null"...), nil
		}
		// Keys in byte order, as encoding/json sorts them; the maps are
		// small, so an insertion sort does.
		var entries []mapEntry
		for it := v.MapRange(); it.Next(); {
			e := mapEntry{it.Key().String(), it.Value()}
			i := len(entries)
			entries = append(entries, e)
			for ; i > 0 && entries[i-1].key > e.key; i-- {
				entries[i] = entries[i-1]
			}
			entries[i] = e
		}
		b = append(b, '{')
		for i, e := range entries {
			if i > 0 {
				b = append(b, ',')
			}
			b = append(AppendString(b, e.key), ':')
			var err error
			if b, err = appendValue(b, e.value); err != nil {
				return nil, within(err, "."+e.key)
			}
		}
		return append(b, '}'), nil
	case reflect.Struct:
		return appendStruct(b, v)
	}
	return nil, &Error{"", "type " + t.String() + " is not supported"}
}

type mapEntry struct {
	key   string
	value reflect.Value
}

func appendStruct(b []byte, v reflect.Value) ([]byte, error) {
	fields, err := structFields(v.Type())
	if err != nil {
		return nil, err
	}
	b = append(b, '{')
	first := true
	for _, f := range fields {
		fv, ok := fieldByIndex(v, f.index)
		if !ok || f.omitEmpty && isEmpty(fv) {
			continue
		}
		if !first {
			b = append(b, ',')
		}
		first = false
		b = append(AppendString(b, f.name), ':')
		var err error
		if b, err = appendValue(b, fv); err != nil {
			return nil, within(err, "."+f.name)
		}
	}
	return append(b, '}'), nil
}

// field is one JSON member of a struct type: its name, the path of field
// indexes to it through embedded structs, and its options.
type field struct {
	name      string
	index     []int
	tagged    bool
	omitEmpty bool
}

// fieldCache holds structFields per type (the bridge serves one call at a
// time, but callers elsewhere may run encoders in parallel goroutines).
var fieldCache sync.Map // reflect.Type → fieldList

type fieldList struct {
	fields []field
	err    error
}

// structFields lists the members of struct type t in field order, with the
// fields of untagged embedded structs promoted by encoding/json's rule: of
// the fields with one name, the shallowest wins, at equal depth a tagged
// one, and if that leaves more than one, none is written.
func structFields(t reflect.Type) ([]field, error) {
	if c, ok := fieldCache.Load(t); ok {
		l := c.(fieldList)
		return l.fields, l.err
	}
	var all []field
	var bad error
	var walk func(t reflect.Type, index []int)
	walk = func(t reflect.Type, index []int) {
		if len(index) > 16 {
			return // embedding deeper than this is a cycle through pointers
		}
		for i := 0; i < t.NumField(); i++ {
			sf := t.Field(i)
			tag := jsonTag(string(sf.Tag))
			if tag == "-" {
				continue
			}
			name, opts, _ := strings.Cut(tag, ",")
			at := append(append([]int(nil), index...), i)
			if sf.Anonymous && name == "" {
				ft := sf.Type
				if ft.Kind() == reflect.Pointer {
					ft = ft.Elem()
				}
				if ft.Kind() == reflect.Struct {
					walk(ft, at)
					continue
				}
			}
			if !sf.IsExported() {
				continue
			}
			f := field{name: name, index: at, tagged: name != "", omitEmpty: opts == "omitempty"}
			if name == "" {
				f.name = sf.Name
			}
			if opts != "" && opts != "omitempty" && bad == nil {
				bad = &Error{"." + f.name, "tag option " + strconv.Quote(opts) + " is not supported"}
			}
			all = append(all, f)
		}
	}
	walk(t, nil)
	var out []field
	for i, f := range all {
		if dominant(all, i) {
			out = append(out, f)
		}
	}
	fieldCache.Store(t, fieldList{out, bad})
	return out, bad
}

// dominant reports whether all[i] is the one field written for its name.
func dominant(all []field, i int) bool {
	f := all[i]
	for j, g := range all {
		if j == i || g.name != f.name {
			continue
		}
		switch {
		case len(g.index) < len(f.index):
			return false
		case len(g.index) == len(f.index) && (g.tagged == f.tagged || g.tagged):
			return false
		}
	}
	return true
}

// fieldByIndex follows index from v; ok is false when it passes a nil
// embedded pointer (whose fields encoding/json leaves out).
func fieldByIndex(v reflect.Value, index []int) (reflect.Value, bool) {
	for k, i := range index {
		if k > 0 && v.Kind() == reflect.Pointer {
			if v.IsNil() {
				return reflect.Value{}, false
			}
			v = v.Elem()
		}
		v = v.Field(i)
	}
	return v, true
}

// jsonTag returns the value of the json key of a struct tag written in the
// conventional form (key:"value" pairs separated by spaces, as go vet
// checks), or "". Values with backslash escapes are not expected.
func jsonTag(tag string) string {
	for tag != "" {
		tag = strings.TrimLeft(tag, " ")
		key, rest, ok := strings.Cut(tag, `:"`)
		if !ok {
			return ""
		}
		value, after, ok := strings.Cut(rest, `"`)
		if !ok {
			return ""
		}
		if key == "json" {
			return value
		}
		tag = after
	}
	return ""
}

// isEmpty is encoding/json's test for omitempty.
func isEmpty(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.Array, reflect.Map, reflect.Slice, reflect.String:
		return v.Len() == 0
	case reflect.Bool:
		return !v.Bool()
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return v.Int() == 0
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		return v.Uint() == 0
	case reflect.Float32, reflect.Float64:
		return v.Float() == 0
	case reflect.Interface, reflect.Pointer:
		return v.IsNil()
	}
	return false
}

// appendFloat writes f as encoding/json does: the shortest representation
// that reads back exactly, in %f form, or in %e form below 1e-6 and from
// 1e21 on (1e20 for float32) with a one-digit negative exponent written
// without its leading zero.
func appendFloat(b []byte, f float64, bits int) ([]byte, error) {
	if math.IsInf(f, 0) || math.IsNaN(f) {
		return nil, &Error{"", "unsupported value " + strconv.FormatFloat(f, 'g', -1, bits)}
	}
	format := byte('f')
	if abs := math.Abs(f); abs != 0 {
		if bits == 64 && (abs < 1e-6 || abs >= 1e21) || bits == 32 && (float32(abs) < 1e-6 || float32(abs) >= 1e21) {
			format = 'e'
		}
	}
	b = strconv.AppendFloat(b, f, format, -1, bits)
	if format == 'e' {
		if n := len(b); n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b, nil
}

const hexDigits = "0123456789abcdef"

// AppendString appends s as a JSON string as encoding/json writes it:
// quotes, backslashes and control characters escaped (\b, \f, \n, \r, \t
// by name, others as \u00XX), <, > and & as \u003c, \u003e, \u0026,
// U+2028 and U+2029 escaped, and invalid UTF-8 replaced by \ufffd.
func AppendString(b []byte, s string) []byte { return appendString(b, s, true) }

// AppendStringKeepHTML is AppendString without the escapes of <, > and &,
// as encoding/json writes with SetEscapeHTML(false) (the engine's result,
// read by JSON.parse only).
func AppendStringKeepHTML(b []byte, s string) []byte { return appendString(b, s, false) }

func appendString(b []byte, s string, html bool) []byte {
	b = append(b, '"')
	start := 0
	for i := 0; i < len(s); {
		c := s[i]
		if c < utf8.RuneSelf {
			if c >= 0x20 && c != '"' && c != '\\' && !(html && (c == '<' || c == '>' || c == '&')) {
				i++
				continue
			}
			b = append(b, s[start:i]...)
			switch c {
			case '"', '\\':
				b = append(b, '\\', c)
			case '\b':
				b = append(b, '\\', 'b')
			case '\f':
				b = append(b, '\\', 'f')
			case '\n':
				b = append(b, '\\', 'n')
			case '\r':
				b = append(b, '\\', 'r')
			case '\t':
				b = append(b, '\\', 't')
			default:
				b = append(b, '\\', 'u', '0', '0', hexDigits[c>>4], hexDigits[c&0xf])
			}
			i++
			start = i
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && size == 1 {
			b = append(b, s[start:i]...)
			b = append(b, `\ufffd`...)
			i += size
			start = i
			continue
		}
		if r == '\u2028' || r == '\u2029' {
			b = append(b, s[start:i]...)
			b = append(b, '\\', 'u', '2', '0', '2', hexDigits[r&0xf])
			i += size
			start = i
			continue
		}
		i += size
	}
	b = append(b, s[start:]...)
	return append(b, '"')
}
