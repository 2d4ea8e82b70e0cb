package tension

import (
	"encoding/json"
	"math"
	"reflect"
	"testing"
)

// FuzzConvert decodes a conversion request with an inline calibration,
// fits it and converts; it must never panic, and nothing it returns may be
// NaN or Inf. Seeds are in testdata/fuzz/FuzzConvert.
func FuzzConvert(f *testing.F) {
	f.Add([]byte(`{"calibration":{"columns":[{"spoke":{"diameter_mm":1.8,"material":"stainless_steel"},"points":[{"tension_n":500,"reading":20},{"tension_n":1000,"reading":30}]},{"spoke":{"diameter_mm":2.0,"material":"stainless_steel"},"points":[{"tension_n":500,"reading":25},{"tension_n":1000,"reading":36}]}]},"spoke":{"diameter_mm":2.3,"material":"stainless_steel"},"readings":[30,40]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		// The request body of a conversion with an inline calibration.
		var body struct {
			Calibration *Calibration `json:"calibration"`
			ConversionRequest
		}
		if json.Unmarshal(data, &body) != nil || body.Calibration == nil {
			return
		}
		if len(body.Calibration.Columns) > 8 || len(body.Readings) > 50 {
			return // keep each input fast; limits are checked elsewhere
		}
		for _, c := range body.Calibration.Columns {
			if len(c.Points) > 30 {
				return
			}
		}
		m, err := Fit(*body.Calibration, Tool{})
		if err != nil {
			return
		}
		checkFinite(t, "model", reflect.ValueOf(m))
		out, err := m.ConvertRequest(body.ConversionRequest)
		if err != nil {
			return
		}
		checkFinite(t, "response", reflect.ValueOf(out))
		if _, err := json.Marshal(out); err != nil {
			t.Fatalf("response does not marshal: %v", err)
		}
	})
}

// checkFinite walks a value and fails on any NaN or Inf float.
func checkFinite(t *testing.T, path string, v reflect.Value) {
	switch v.Kind() {
	case reflect.Float64:
		if f := v.Float(); math.IsNaN(f) || math.IsInf(f, 0) {
			t.Fatalf("%s = %v", path, f)
		}
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			checkFinite(t, path, v.Elem())
		}
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			if v.Type().Field(i).IsExported() {
				checkFinite(t, path+"."+v.Type().Field(i).Name, v.Field(i))
			}
		}
	case reflect.Slice, reflect.Array:
		for i := 0; i < v.Len(); i++ {
			checkFinite(t, path, v.Index(i))
		}
	}
}
