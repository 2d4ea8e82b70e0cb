package api

import (
	"encoding/json"
	"reflect"
	"slices"
	"strconv"
	"strings"
)

// unknownFieldPointer finds the RFC 6901 pointer of the first object member
// in body that the Go type of v has no field for. encoding/json names only
// the member, not where it is; this walks the body beside the type. It runs
// on the error path only. It returns "" when it finds nothing.
func unknownFieldPointer(body []byte, v any) string {
	var doc any
	if err := json.Unmarshal(body, &doc); err != nil {
		return ""
	}
	p, _ := findUnknown(doc, reflect.TypeOf(v), "")
	return p
}

func findUnknown(doc any, t reflect.Type, at string) (string, bool) {
	for t != nil && t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	if t == nil {
		return "", false
	}
	switch d := doc.(type) {
	case map[string]any:
		if t.Kind() == reflect.Map {
			for k, x := range d {
				if p, ok := findUnknown(x, t.Elem(), at+"/"+escapePointer(k)); ok {
					return p, true
				}
			}
			return "", false
		}
		if t.Kind() != reflect.Struct {
			return "", false
		}
		fields := jsonFields(t)
		// Members in a stable order, so that the same body names the same field.
		keys := make([]string, 0, len(d))
		for k := range d {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		for _, k := range keys {
			ft, ok := fields[k]
			if !ok {
				for name, f := range fields { // encoding/json matches names case-insensitively
					if strings.EqualFold(name, k) {
						ft, ok = f, true
						break
					}
				}
			}
			if !ok {
				return at + "/" + escapePointer(k), true
			}
			if p, ok := findUnknown(d[k], ft, at+"/"+escapePointer(k)); ok {
				return p, true
			}
		}
	case []any:
		if t.Kind() != reflect.Slice && t.Kind() != reflect.Array {
			return "", false
		}
		for i, x := range d {
			if p, ok := findUnknown(x, t.Elem(), at+"/"+strconv.Itoa(i)); ok {
				return p, true
			}
		}
	}
	return "", false
}

// jsonFields maps a struct's JSON member names to their types, embedded
// structs flattened as encoding/json does.
func jsonFields(t reflect.Type) map[string]reflect.Type {
	out := map[string]reflect.Type{}
	for i := range t.NumField() {
		f := t.Field(i)
		tag := f.Tag.Get("json")
		if tag == "-" {
			continue
		}
		name, _, _ := strings.Cut(tag, ",")
		if f.Anonymous && name == "" {
			et := f.Type
			if et.Kind() == reflect.Pointer {
				et = et.Elem()
			}
			if et.Kind() == reflect.Struct {
				for k, v := range jsonFields(et) {
					if _, dup := out[k]; !dup {
						out[k] = v
					}
				}
				continue
			}
		}
		if !f.IsExported() {
			continue
		}
		if name == "" {
			name = f.Name
		}
		out[name] = f.Type
	}
	return out
}

func escapePointer(s string) string {
	return strings.ReplaceAll(strings.ReplaceAll(s, "~", "~0"), "/", "~1")
}
