package tension

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// TestMessagesMatchFmt: every strconv-built warning and caution equals the
// fmt.Sprintf text it replaced (the format strings below are the former
// ones, verbatim), for awkward figures — halves that round either way,
// negative zero, NaN, infinities, huge and tiny values — and random ones.
func TestMessagesMatchFmt(t *testing.T) {
	vals := []float64{0, math.Copysign(0, -1), 0.5, 1.5, 2.5, -0.5, 0.005, 0.015, 1.005, 1.125, 1.3, 1.6, 2.2,
		2.2049999999999996, 999.5, 1000.4999999999999, -3, -0.3, -0.5, -0.5000000000000001, -1.5, 3.5, 4.5,
		1 << 53, 1<<53 - 1, 1<<53 + 2, -(1 << 53), 9007199254740991.5, 4503599627370495.5, -4503599627370496.5,
		1e-300, 5e-324, 1e21, 1.7976931348623157e308,
		math.NaN(), math.Inf(1), math.Inf(-1)}
	rng := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 300; i++ {
		vals = append(vals, math.Ldexp(rng.Float64(), rng.IntN(40)-10), -rng.Float64()*3000)
	}
	check := func(name, got, want string) {
		t.Helper()
		if got != want {
			t.Errorf("%s:\n got %q\nwant %q", name, got, want)
		}
	}
	for i, v := range vals {
		w := vals[(i*7+3)%len(vals)]
		x := vals[(i*13+5)%len(vals)]
		check("unreliable ratio", msgUnreliableRatio("round 2.6 mm, E 193 GPa", v), fmt.Sprintf(
			"the %s spoke's bending stiffness is %.2f× that of the nearest calibrated column (beyond %.1f×): results are unreliable", "round 2.6 mm, E 193 GPa", v, ratioUnreliable))
		check("calibrate", msgCalibrate(v), fmt.Sprintf(
			"stiffness ratio %.2f is beyond %.1f: calibrate this size with known tensions (about 600, 1000 and 1400 N, three readings each)", v, ratioCalibrate))
		check("verify", msgVerify(v), fmt.Sprintf(
			"stiffness ratio %.2f is beyond %.1f: verify the tool on this spoke with one known tension", v, ratioVerify))
		check("modulus", msgOtherModulus(v), fmt.Sprintf(
			"No calibrated column has this spoke's modulus (%g GPa); the result rests on the tool model and the material's stiffness.", v))
		check("outside range", msgOutsideRange(v, [2]float64{w, x}), fmt.Sprintf(
			"%.0f N lies outside the calibrated tensions %.0f–%.0f N", v, w, x))
		check("coarse", msgCoarse(v, w), fmt.Sprintf(
			"one dial unit is %.0f N here (%.1f %% of the tension, beyond %.0f %%): read carefully and average several readings", v, 100*v/w, 100*resolutionMax))
		check("wide", msgWide(v, w), fmt.Sprintf(
			"the 95 %% interval is ±%.0f N (%.1f %% of the tension, beyond %.0f %%)", v, w, 100*halfWidthMax))
		check("bare number", msgBareNumber(v, [2]float64{w, x}), fmt.Sprintf(
			"Do not use %.0f N as a bare number: the true tension may lie anywhere in %.0f–%.0f N. Calibrate this spoke size against known tensions before building to it.", v, w, x))
		check("widened", msgWidened(v), fmt.Sprintf(
			"the interval is widened to ±%.1f %% of the tension: an answer off the calibrated columns is never more certain than the calibration beside it at the same tension", v))
		check("unchecked", msgUnchecked(v), fmt.Sprintf(
			"the calibrated columns beside this section cannot be evaluated at %.0f N, so its interval cannot be checked against them", v))
		for _, s := range []section{
			{Spec: SpokeSpec{Profile: "round", DiameterMM: v}, E: w},
			{Spec: SpokeSpec{Profile: "bladed", WidthMM: v, ThicknessMM: x}, E: w},
		} {
			want := fmt.Sprintf("round %g mm, E %g GPa", s.Spec.DiameterMM, s.E)
			if s.Spec.Profile != "round" {
				want = fmt.Sprintf("%s %g × %g mm, E %g GPa", s.Spec.Profile, s.Spec.WidthMM, s.Spec.ThicknessMM, s.E)
			}
			check("describe", s.describe(), want)
		}
	}
}

// TestProfileMessage: the profile warning names the profile and asks for
// a known tension.
func TestProfileMessage(t *testing.T) {
	for _, p := range []string{"bladed", "oval", "rectangular", "round"} {
		want := fmt.Sprintf("no calibrated column has a %s profile: this result rests on the tool model's beam physics alone (the section's bending stiffness and its thickness under the plunger, measured with the wide face flat against the anvils). Verify the tool on this spoke against a known tension before building to it", p)
		if got := msgProfile(p); got != want {
			t.Errorf("got %q\nwant %q", got, want)
		}
	}
}

// TestFixed0MatchesFmt: the integer path of %.0f agrees with fmt at and
// beside every half from −3000 to 3000 and at the ends of its range.
func TestFixed0MatchesFmt(t *testing.T) {
	var vals []float64
	for k := -3000.0; k <= 3000; k += 0.5 {
		vals = append(vals, k, math.Nextafter(k, math.Inf(1)), math.Nextafter(k, math.Inf(-1)))
	}
	for _, e := range []float64{1 << 52, 1 << 53} {
		for _, v := range []float64{e, -e} {
			vals = append(vals, v, math.Nextafter(v, 0), math.Nextafter(v, math.Inf(1)), math.Nextafter(v, math.Inf(-1)))
		}
	}
	for _, v := range vals {
		if got, want := string(fixed0(nil, v)), fmt.Sprintf("%.0f", v); got != want {
			t.Errorf("%v (%b): fixed0 %q, fmt %q", v, v, got, want)
		}
	}
}
