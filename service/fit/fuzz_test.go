package fit

import (
	"encoding/json"
	"errors"
	"math"
	"testing"
)

// FuzzCheck varies the parts around the plain road front: Check must either
// refuse with field errors or return a report that encodes as JSON (so no
// NaN or Inf), with a consistent verdict and every change fixing something.
func FuzzCheck(f *testing.F) {
	f.Add(4.0, 2.6, 2.6, 2.7, 4.3, 3.9, 5.6, 600.0, 1000.0, 35.0, 25.0) // road front
	f.Add(4.5, 4.0, 6.0, 4.5, 4.2, 4.5, 6.4, 380.0, 1100.0, 22.0, 55.0) // motor-like
	f.Add(1.0, 9.0, 0.1, 9.0, 1.0, 9.0, 1.0, 40.0, 1e4, 1e-3, 900.0)    // everything wrong
	f.Fuzz(func(t *testing.T, head, hole, elbow, flange, rimHole, shank, nippleHead, erd, target, c2f, tyre float64) {
		in := roadFront()
		in.Spoke.HeadDiameterMM = &head
		in.Hub.Left.HoleDiameterMM, in.Hub.Right.HoleDiameterMM = &hole, &hole
		in.Spoke.ElbowLengthMM = &elbow
		in.Hub.Left.ThicknessMM = &flange
		in.Rim.HoleDiameterMM = rimHole
		in.Nipple.ShankDiameterMM, in.Nipple.HeadDiameterMM = shank, nippleHead
		in.Rim.ERDMM = erd
		in.TargetTensionN = target
		in.Hub.Right.CenterToFlangeMM = c2f
		in.Tyre.WidthMM = tyre
		r, err := Check(in, DefaultOptions())
		if err != nil {
			if len(fieldErrors(err)) == 0 && !errors.Is(err, ErrOptions) {
				t.Fatalf("error of unexpected type: %v", err)
			}
			return
		}
		if _, err := json.Marshal(r); err != nil {
			t.Fatalf("report does not encode: %v", err)
		}
		for _, fd := range r.Findings {
			for k, v := range fd.Values {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("%s value %s = %v", fd.Code, k, v)
				}
			}
		}
		if r.Verdict != verdictOf(r.Findings) {
			t.Fatalf("verdict %s inconsistent", r.Verdict)
		}
		for _, c := range r.Changes {
			if len(c.Fixes) == 0 {
				t.Fatalf("change %+v fixes nothing", c)
			}
		}
	})
}
