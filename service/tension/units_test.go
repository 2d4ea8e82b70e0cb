package tension

import (
	"math"
	"math/big"
	"testing"
)

// TestUnitDefinitions checks the constants against their definitions.
func TestUnitDefinitions(t *testing.T) {
	// 3rd CGPM (1901): standard gravity 980.665 cm/s², so 1 kgf = 9.80665 N exactly.
	if NewtonsPerKgf != 9.80665 {
		t.Errorf("kgf = %v N, CGPM 1901 gives 9.80665", NewtonsPerKgf)
	}
	// 1959 international yard and pound agreement: 1 lb = 0.45359237 kg;
	// lbf = lb × gₙ, computed here in exact rational arithmetic.
	lb, _ := new(big.Rat).SetString("0.45359237")
	gn, _ := new(big.Rat).SetString("9.80665")
	exact, _ := new(big.Rat).Mul(lb, gn).Float64()
	if NewtonsPerLbf != exact {
		t.Errorf("lbf = %v N, 0.45359237 kg × 9.80665 m/s² = %v", NewtonsPerLbf, exact)
	}
	// The same product printed in full: 4.4482216152605 N (REFERENCE.md §4, exact arithmetic).
	if NewtonsPerLbf != 4.4482216152605 {
		t.Errorf("lbf = %v", NewtonsPerLbf)
	}
}

func TestUnitConversions(t *testing.T) {
	// 120 kgf ≈ 1177 N, a common shop figure (common practice); 120 × 9.80665 = 1176.798.
	if got := NFromKgf(120); math.Abs(got-1176.798) > 1e-9 || math.Round(got) != 1177 {
		t.Errorf("120 kgf = %v N, want 1176.798 (≈ 1177)", got)
	}
	// 1 lbf / 1 kgf = 0.45359237 exactly (the pound in kilograms, 1959 agreement).
	if got := KgfFromN(NFromLbf(1)); math.Abs(got-0.45359237) > 1e-15 {
		t.Errorf("1 lbf = %v kgf, want 0.45359237", got)
	}
	// Round trips are the identity to rounding (property).
	for _, n := range []float64{0, 1, 500.5, 1234.5678, 3000} {
		if got := NFromKgf(KgfFromN(n)); math.Abs(got-n) > 1e-12*math.Max(1, n) {
			t.Errorf("kgf round trip %v → %v", n, got)
		}
		if got := NFromLbf(LbfFromN(n)); math.Abs(got-n) > 1e-12*math.Max(1, n) {
			t.Errorf("lbf round trip %v → %v", n, got)
		}
	}
}
