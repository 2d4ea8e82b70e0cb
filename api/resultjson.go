package api

import (
	"encoding/json"
	"errors"
	"math"
	"strconv"

	"wheelbench/service/geometry"
)

// appendResult appends r as JSON, byte for byte what encoding/json writes
// for a geometry.Result (TestAppendResultMatches checks it), at a fraction
// of the cost: the batch encodes 10,000 of them.
func appendResult(b []byte, r *geometry.Result) ([]byte, error) {
	var err error
	b = append(b, `{"left":`...)
	if b, err = appendSide(b, &r.Left); err != nil {
		return b, err
	}
	b = append(b, `,"right":`...)
	if b, err = appendSide(b, &r.Right); err != nil {
		return b, err
	}
	b = append(b, `,"tension_ratio_left_to_right":`...)
	if b, err = appendFloat(b, r.TensionRatioLeftToRight); err != nil {
		return b, err
	}
	b = append(b, `,"findings":`...)
	if r.Findings == nil {
		b = append(b, "null"...)
	} else {
		b = append(b, '[')
		for i := range r.Findings {
			if i > 0 {
				b = append(b, ',')
			}
			f := &r.Findings[i]
			b = append(b, `{"code":`...)
			b = appendString(b, f.Code)
			b = append(b, `,"severity":`...)
			b = appendString(b, f.Severity)
			b = append(b, `,"message":`...)
			b = appendString(b, f.Message)
			if f.Side != "" {
				b = append(b, `,"side":`...)
				b = appendString(b, f.Side)
			}
			b = append(b, '}')
		}
		b = append(b, ']')
	}
	b = append(b, `,"cautions":`...)
	if r.Cautions == nil {
		b = append(b, "null"...)
	} else {
		b = append(b, '[')
		for i, c := range r.Cautions {
			if i > 0 {
				b = append(b, ',')
			}
			b = appendString(b, c)
		}
		b = append(b, ']')
	}
	return append(b, '}'), nil
}

func appendSide(b []byte, s *geometry.SideResult) ([]byte, error) {
	var err error
	num := func(name string, v float64) {
		if err == nil {
			b = append(b, name...)
			b, err = appendFloat(b, v)
		}
	}
	num(`{"length_mm":`, s.LengthMM)
	if s.OrderLengthMM != nil {
		num(`,"order_length_mm":`, *s.OrderLengthMM)
	}
	if s.StockLengthMM != nil {
		num(`,"stock_length_mm":`, *s.StockLengthMM)
	}
	if s.SpokeEndMM != nil {
		num(`,"spoke_end_mm":`, *s.SpokeEndMM)
	}
	num(`,"bracing_angle_deg":`, s.BracingAngleDeg)
	num(`,"nipple_angle_deg":{"in_plane":`, s.NippleAngleDeg.InPlane)
	num(`,"out_of_plane":`, s.NippleAngleDeg.OutOfPlane)
	num(`,"total":`, s.NippleAngleDeg.Total)
	num(`},"hub_angle_deg":`, s.HubAngleDeg)
	b = append(b, `,"max_crosses":`...)
	b = strconv.AppendInt(b, int64(s.MaxCrosses), 10)
	if s.TensionN != nil {
		num(`,"tension_n":`, *s.TensionN)
	}
	return append(b, '}'), err
}

var errNonFinite = errors.New("api: a result holds NaN or Inf")

// appendFloat writes f as encoding/json does: shortest representation,
// 'f' format unless |f| < 1e-6 or ≥ 1e21, exponents without a leading 0.
func appendFloat(b []byte, f float64) ([]byte, error) {
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return b, errNonFinite
	}
	format := byte('f')
	if abs := math.Abs(f); abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, f, format, -1, 64)
	if format == 'e' {
		if n := len(b); n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b, nil
}

// appendString writes plain ASCII strings directly and leaves anything that
// needs escaping (quotes, controls, <, >, &, non-ASCII) to encoding/json.
func appendString(b []byte, s string) []byte {
	for i := 0; i < len(s); i++ {
		if c := s[i]; c < 0x20 || c >= 0x80 || c == '"' || c == '\\' || c == '<' || c == '>' || c == '&' {
			q, _ := json.Marshal(s) // a string always encodes
			return append(b, q...)
		}
	}
	b = append(b, '"')
	b = append(b, s...)
	return append(b, '"')
}
