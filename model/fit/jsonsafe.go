package fit

import (
	"encoding/json"
	"math"
	"reflect"
	"strings"
)

// jsonSafe returns v as plain maps, slices and values for encoding/json, with every NaN or
// infinite float64 replaced by nil (JSON null), which encoding/json cannot write otherwise.
// Struct fields follow their json tags; fields tagged "-" are left out; the fields of an
// embedded struct without a tag appear as the outer struct's own.
func jsonSafe(v any) any { return safe(reflect.ValueOf(v)) }

func safe(v reflect.Value) any {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return nil
		}
		return safe(v.Elem())
	case reflect.Float32, reflect.Float64:
		f := v.Float()
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return nil
		}
		return f
	case reflect.Slice, reflect.Array:
		if v.Kind() == reflect.Slice && v.IsNil() {
			return []any{}
		}
		out := make([]any, v.Len())
		for i := range out {
			out[i] = safe(v.Index(i))
		}
		return out
	case reflect.Map:
		out := make(map[string]any, v.Len())
		it := v.MapRange()
		for it.Next() {
			out[it.Key().String()] = safe(it.Value())
		}
		return out
	case reflect.Struct:
		out := make(map[string]any)
		t := v.Type()
		for i := range t.NumField() {
			f := t.Field(i)
			if !f.IsExported() {
				continue
			}
			if f.Anonymous && f.Tag.Get("json") == "" && f.Type.Kind() == reflect.Struct {
				// Fields of an embedded struct are promoted, as encoding/json does.
				for k, x := range safe(v.Field(i)).(map[string]any) {
					out[k] = x
				}
				continue
			}
			name := f.Name
			if tag := f.Tag.Get("json"); tag != "" {
				tname, _, _ := strings.Cut(tag, ",")
				if tname == "-" {
					continue
				}
				if tname != "" {
					name = tname
				}
			}
			out[name] = safe(v.Field(i))
		}
		return out
	default:
		return v.Interface()
	}
}

// JSONIndent encodes v as indented JSON with every NaN or infinite number written as null
// (see the summaries' files), ending in a newline.
func JSONIndent(v any) ([]byte, error) {
	data, err := json.MarshalIndent(jsonSafe(v), "", "  ")
	return append(data, '\n'), err
}
