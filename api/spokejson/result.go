package spokejson

import (
	"encoding/json"
	"errors"
	"math"
	"slices"
	"strconv"

	"wheelbench/service/fit"
	"wheelbench/service/geometry"
)

// AppendResult appends r as JSON, byte for byte what encoding/json writes
// for it (TestAppendResultMatches checks it), at a fraction of the cost:
// the batch encodes 10,000 of them. A result holding NaN or Inf is an
// error, as it is for encoding/json.
func AppendResult(b []byte, r *fit.WheelResult) ([]byte, error) {
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
	if len(r.Lacing) > 0 {
		b = append(b, `,"lacing":[`...)
		for i := range r.Lacing {
			if i > 0 {
				b = append(b, ',')
			}
			if b, err = appendLacing(b, &r.Lacing[i]); err != nil {
				return b, err
			}
		}
		b = append(b, ']')
	}
	if r.KeySpoke != 0 {
		b = append(b, `,"key_spoke":`...)
		b = strconv.AppendInt(b, int64(r.KeySpoke), 10)
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
			if b, err = appendFinding(b, &r.Findings[i]); err != nil {
				return b, err
			}
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

func appendFinding(b []byte, f *fit.Finding) ([]byte, error) {
	var err error
	b = append(b, `{"code":`...)
	b = appendString(b, f.Code)
	b = append(b, `,"severity":`...)
	b = appendString(b, string(f.Severity))
	if f.Side != "" {
		b = append(b, `,"side":`...)
		b = appendString(b, f.Side)
	}
	b = append(b, `,"message":`...)
	b = appendString(b, f.Message)
	if f.Remedy != "" {
		b = append(b, `,"remedy":`...)
		b = appendString(b, f.Remedy)
	}
	if len(f.Values) > 0 {
		// encoding/json writes a map's keys sorted.
		var keys [16]string
		ks := keys[:0]
		for k := range f.Values {
			ks = append(ks, k)
		}
		slices.Sort(ks)
		b = append(b, `,"values":{`...)
		for i, k := range ks {
			if i > 0 {
				b = append(b, ',')
			}
			b = appendString(b, k)
			b = append(b, ':')
			if b, err = appendFloat(b, f.Values[k]); err != nil {
				return b, err
			}
		}
		b = append(b, '}')
	}
	if len(f.Assumed) > 0 {
		b = append(b, `,"assumed":[`...)
		for i, a := range f.Assumed {
			if i > 0 {
				b = append(b, ',')
			}
			b = appendString(b, a)
		}
		b = append(b, ']')
	}
	if f.FixedByChange {
		b = append(b, `,"fixed_by_change":true}`...)
	} else {
		b = append(b, `,"fixed_by_change":false}`...)
	}
	return b, nil
}

func appendLacing(b []byte, l *geometry.LacingSpoke) ([]byte, error) {
	var err error
	b = append(b, `{"spoke":`...)
	b = strconv.AppendInt(b, int64(l.Spoke), 10)
	b = append(b, `,"side":`...)
	b = appendString(b, l.Side)
	b = append(b, `,"rim_hole_deg":`...)
	if b, err = appendFloat(b, l.RimHoleDeg); err != nil {
		return b, err
	}
	b = append(b, `,"hub_hole_deg":`...)
	if b, err = appendFloat(b, l.HubHoleDeg); err != nil {
		return b, err
	}
	b = append(b, `,"head":`...)
	b = appendString(b, l.Head)
	b = append(b, `,"direction":`...)
	b = appendString(b, l.Direction)
	b = append(b, `,"crosses":`...)
	b = strconv.AppendInt(b, int64(l.Crosses), 10)
	b = append(b, `,"length_mm":`...)
	if b, err = appendFloat(b, l.LengthMM); err != nil {
		return b, err
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
	b = append(b, `,"spokes":`...)
	b = strconv.AppendInt(b, int64(s.Spokes), 10)
	b = append(b, `,"exit":`...)
	b = appendString(b, s.Exit)
	if s.ExitAngleDeg != nil {
		num(`,"exit_angle_deg":`, *s.ExitAngleDeg)
	}
	b = append(b, `,"max_crosses_clear_of_heads":`...)
	b = strconv.AppendInt(b, int64(s.MaxCrossesClearOfHeads), 10)
	b = append(b, `,"length_groups":`...)
	if s.LengthGroups == nil {
		b = append(b, "null"...)
	} else {
		b = append(b, '[')
		for i := range s.LengthGroups {
			g := &s.LengthGroups[i]
			if i > 0 {
				b = append(b, ',')
			}
			num(`{"length_mm":`, g.LengthMM)
			b = append(b, `,"count":`...)
			b = strconv.AppendInt(b, int64(g.Count), 10)
			if g.OrderLengthMM != nil {
				num(`,"order_length_mm":`, *g.OrderLengthMM)
			}
			if g.StockLengthMM != nil {
				num(`,"stock_length_mm":`, *g.StockLengthMM)
			}
			if g.SpokeEndMM != nil {
				num(`,"spoke_end_mm":`, *g.SpokeEndMM)
			}
			b = append(b, '}')
		}
		b = append(b, ']')
	}
	return append(b, '}'), err
}

var errNonFinite = errors.New("spokejson: a result holds NaN or Inf")

// appendFloat writes f as encoding/json does: shortest representation,
// 'f' format unless |f| < 1e-6 or ≥ 1e21, exponents without a leading 0.
func appendFloat(b []byte, f float64) ([]byte, error) {
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return b, errNonFinite
	}
	if abs := math.Abs(f); abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		b = strconv.AppendFloat(b, f, 'e', -1, 64)
		if n := len(b); n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
		return b, nil
	} else if abs == 0 {
		return strconv.AppendFloat(b, f, 'f', -1, 64), nil
	}
	return appendFixed(b, f), nil
}

// appendFixed is strconv.AppendFloat(b, f, 'f', -1, 64) for a finite,
// non-zero f with 1e-6 ≤ |f| < 1e21. It lets strconv find the same
// shortest digits in its 'e' form, d[.ddd]e±XX, which it writes in bulk,
// and lays them out itself: the 'f' form is written a digit at a time,
// and that was a third of encoding a result (TestAppendFloatFixed checks
// the two agree).
func appendFixed(b []byte, f float64) []byte {
	var tmp [32]byte
	e := strconv.AppendFloat(tmp[:0], f, 'e', -1, 64)
	if e[0] == '-' {
		b = append(b, '-')
		e = e[1:]
	}
	x := len(e) - 4 // e±XX: two exponent digits, as -6 ≤ exponent ≤ 20
	exp := 0
	for _, c := range e[x+2:] {
		exp = exp*10 + int(c-'0')
	}
	if e[x+1] == '-' {
		exp = -exp
	}
	first, rest := e[0], e[min(2, x):x] // the digits: first, then rest
	switch dp := exp + 1; {
	case dp <= 0: // 0.000ddd
		b = append(b, '0', '.')
		b = append(b, "000000"[:-dp]...)
		b = append(b, first)
		b = append(b, rest...)
	case dp > len(rest): // ddd000
		b = append(b, first)
		b = append(b, rest...)
		for range dp - 1 - len(rest) {
			b = append(b, '0')
		}
	default: // dd.ddd
		b = append(b, first)
		b = append(b, rest[:dp-1]...)
		b = append(b, '.')
		b = append(b, rest[dp-1:]...)
	}
	return b
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
