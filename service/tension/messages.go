package tension

import (
	"math"
	"strconv"
)

// The warning and caution texts of a conversion, built with strconv from
// constant parts: fmt boxed every figure and cost about as much as the
// conversion's numerics. Each builder writes exactly what the fmt verb in
// its comment writes (%.Nf is strconv's 'f' with N digits, %g is 'g' with
// the shortest precision); TestMessagesMatchFmt checks them against fmt.

// fixed appends v as %.<prec>f does.
func fixed(b []byte, v float64, prec int) []byte { return strconv.AppendFloat(b, v, 'f', prec, 64) }

// fixed0 appends v as %.0f does, by the integer path for |v| < 2⁵³: %.0f
// is the nearest integer, ties to even, and a negative value that rounds
// to zero prints as "-0".
func fixed0(b []byte, v float64) []byte {
	if r := math.RoundToEven(v); math.Abs(r) < 1<<53 { // false for NaN and ±Inf
		if r == 0 && math.Signbit(v) {
			return append(b, "-0"...)
		}
		return strconv.AppendInt(b, int64(r), 10)
	}
	return fixed(b, v, 0)
}

// short appends v as %g does.
func short(b []byte, v float64) []byte { return strconv.AppendFloat(b, v, 'g', -1, 64) }

// The thresholds as the messages print them.
var (
	tailUnreliableRatio = "× that of the nearest calibrated column (beyond " +
		strconv.FormatFloat(ratioUnreliable, 'f', 1, 64) + "×): results are unreliable"
	tailCalibrate = " is beyond " + strconv.FormatFloat(ratioCalibrate, 'f', 1, 64) +
		": calibrate this size with known tensions (about 600, 1000 and 1400 N, three readings each)"
	tailVerify = " is beyond " + strconv.FormatFloat(ratioVerify, 'f', 1, 64) +
		": verify the tool on this spoke with one known tension"
	tailCoarse = " % of the tension, beyond " + strconv.FormatFloat(100*resolutionMax, 'f', 0, 64) +
		" %): read carefully and average several readings"
	tailWide = " % of the tension, beyond " + strconv.FormatFloat(100*halfWidthMax, 'f', 0, 64) + " %)"
)

// msgUnreliableRatio: "the %s spoke's bending stiffness is %.2f× that of
// the nearest calibrated column (beyond %.1f×): results are unreliable".
func msgUnreliableRatio(desc string, ratio float64) string {
	var buf [192]byte
	b := append(buf[:0], "the "...)
	b = append(b, desc...)
	b = append(b, " spoke's bending stiffness is "...)
	b = fixed(b, ratio, 2)
	b = append(b, tailUnreliableRatio...)
	return string(b)
}

// msgCalibrate: "stiffness ratio %.2f is beyond %.1f: calibrate this size
// with known tensions (about 600, 1000 and 1400 N, three readings each)".
func msgCalibrate(ratio float64) string {
	var buf [160]byte
	b := append(buf[:0], "stiffness ratio "...)
	b = fixed(b, ratio, 2)
	b = append(b, tailCalibrate...)
	return string(b)
}

// msgVerify: "stiffness ratio %.2f is beyond %.1f: verify the tool on this
// spoke with one known tension".
func msgVerify(ratio float64) string {
	var buf [128]byte
	b := append(buf[:0], "stiffness ratio "...)
	b = fixed(b, ratio, 2)
	b = append(b, tailVerify...)
	return string(b)
}

// msgOtherModulus: "No calibrated column has this spoke's modulus (%g GPa);
// the result rests on the tool model and the material's stiffness."
func msgOtherModulus(e float64) string {
	var buf [160]byte
	b := append(buf[:0], "No calibrated column has this spoke's modulus ("...)
	b = short(b, e)
	b = append(b, " GPa); the result rests on the tool model and the material's stiffness."...)
	return string(b)
}

// msgOutsideRange: "%.0f N lies outside the calibrated tensions %.0f–%.0f N".
func msgOutsideRange(t float64, rng [2]float64) string {
	var buf [96]byte
	b := fixed0(buf[:0], t)
	b = append(b, " N lies outside the calibrated tensions "...)
	b = fixed0(b, rng[0])
	b = append(b, "–"...)
	b = fixed0(b, rng[1])
	b = append(b, " N"...)
	return string(b)
}

// msgCoarse: "one dial unit is %.0f N here (%.1f %% of the tension, beyond
// %.0f %%): read carefully and average several readings".
func msgCoarse(resolution, t float64) string {
	var buf [160]byte
	b := append(buf[:0], "one dial unit is "...)
	b = fixed0(b, resolution)
	b = append(b, " N here ("...)
	b = fixed(b, 100*resolution/t, 1)
	b = append(b, tailCoarse...)
	return string(b)
}

// msgWide: "the 95 %% interval is ±%.0f N (%.1f %% of the tension, beyond
// %.0f %%)", share is 100·half-width/tension.
func msgWide(hw, share float64) string {
	var buf [96]byte
	b := append(buf[:0], "the 95 % interval is ±"...)
	b = fixed0(b, hw)
	b = append(b, " N ("...)
	b = fixed(b, share, 1)
	b = append(b, tailWide...)
	return string(b)
}

// msgBareNumber: "Do not use %.0f N as a bare number: the true tension may
// lie anywhere in %.0f–%.0f N. Calibrate this spoke size against known
// tensions before building to it."
func msgBareNumber(t float64, iv [2]float64) string {
	var buf [192]byte
	b := append(buf[:0], "Do not use "...)
	b = fixed0(b, t)
	b = append(b, " N as a bare number: the true tension may lie anywhere in "...)
	b = fixed0(b, iv[0])
	b = append(b, "–"...)
	b = fixed0(b, iv[1])
	b = append(b, " N. Calibrate this spoke size against known tensions before building to it."...)
	return string(b)
}

// msgProfile: "no calibrated column has a %s profile: this result rests on
// the tool model's beam physics alone (the section's bending stiffness and
// its thickness under the plunger, measured with the wide face flat against
// the anvils). Verify the tool on this spoke against a known tension before
// building to it".
func msgProfile(profile string) string {
	var buf [320]byte
	b := append(buf[:0], "no calibrated column has a "...)
	b = append(b, profile...)
	b = append(b, " profile: this result rests on the tool model's beam physics alone (the section's bending stiffness and its thickness under the plunger, measured with the wide face flat against the anvils). Verify the tool on this spoke against a known tension before building to it"...)
	return string(b)
}

// msgWidened: "the interval is widened to ±%.1f %% of the tension: an
// answer off the calibrated columns is never more certain than the
// calibration beside it at the same tension".
func msgWidened(share float64) string {
	var buf [192]byte
	b := append(buf[:0], "the interval is widened to ±"...)
	b = fixed(b, share, 1)
	b = append(b, " % of the tension: an answer off the calibrated columns is never more certain than the calibration beside it at the same tension"...)
	return string(b)
}

// msgUnchecked: "the calibrated columns beside this section cannot be
// evaluated at %.0f N, so its interval cannot be checked against them".
func msgUnchecked(t float64) string {
	var buf [160]byte
	b := append(buf[:0], "the calibrated columns beside this section cannot be evaluated at "...)
	b = fixed0(b, t)
	b = append(b, " N, so its interval cannot be checked against them"...)
	return string(b)
}
