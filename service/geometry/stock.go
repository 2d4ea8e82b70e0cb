package geometry

import "math"

// chooseStock returns the available length nearest to want (ties go to the
// shorter length). s has been validated: a positive increment or a
// non-empty list of positive lengths.
func chooseStock(s *Stock, want float64) float64 {
	if s.IncrementMM != nil {
		inc := *s.IncrementMM
		k := math.Ceil(want/inc - 0.5) // nearest multiple, a tie rounds down
		if k < 1 {
			k = 1
		}
		return k * inc
	}
	best := s.LengthsMM[0]
	for _, v := range s.LengthsMM[1:] {
		dv, db := math.Abs(v-want), math.Abs(best-want)
		if dv < db || (dv == db && v < best) {
			best = v
		}
	}
	return best
}
