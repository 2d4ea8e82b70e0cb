package fit

import (
	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
)

// Invented demo parts for tests; no real product is described.

func f64(x float64) *float64 { return &x }
func intp(n int) *int        { return &n }

func crosses(l, r int) geometry.Cross { return geometry.Cross{Left: intp(l), Right: intp(r)} }

// roadFront is a plain 32-hole road front: 2.0 mm stainless spokes (typical
// head, elbow and thread filled by gauge), brass 12 mm nipples threaded for
// 2.0 mm spokes, a 622 rim of 19 mm inner width and a 25 mm tyre.
func roadFront() Input {
	fl := geometry.Flange{PCDMM: 38, CenterToFlangeMM: 35, HoleDiameterMM: f64(2.6), ThicknessMM: f64(2.7)}
	return Input{
		SpokeCount: 32,
		Hub:        geometry.Hub{Holes: 32, Kind: geometry.KindBicycle, Type: geometry.JBend, SpacingMM: f64(100), Left: fl, Right: fl},
		Rim: geometry.Rim{Holes: 32, ERDMM: 600, BSDMM: 622, InnerWidthMM: 19, HoleDiameterMM: 4.3,
			MaxTensionN: f64(1300)},
		Spoke: spoke.Spec{DiameterMM: f64(2.0), Material: "stainless_steel"},
		Nipple: Nipple{Thread: spoke.Thread{SizeMM: f64(2.0), TPI: f64(56)}, ShankDiameterMM: 3.9, HeadDiameterMM: 5.6,
			LengthMM: 12, Material: "brass"},
		Washers:        []Washer{{ThicknessMM: 0.5, InnerDiameterMM: 2.2, OuterDiameterMM: 5.0}},
		Tyre:           &Tyre{BSDMM: 622, WidthMM: 28},
		FrameSpacingMM: f64(100),
		Crosses:        crosses(3, 3),
		TargetTensionN: 1000,
	}
}

// motorBuild is a 36-hole hub motor with 4.0 mm flange holes and 4.5 mm thick
// flanges, 13-gauge spokes with 6.0 mm elbows (head and thread by gauge),
// nipples whose 4.5 mm shank will not pass the 4.2 mm holes of a 406 rim, and
// a 0.8 mm hub washer on hand, laced 2-cross.
func motorBuild() Input {
	fl := geometry.Flange{PCDMM: 150, CenterToFlangeMM: 22, HoleDiameterMM: f64(4.0), ThicknessMM: f64(4.5)}
	return Input{
		SpokeCount: 36,
		Hub:        geometry.Hub{Holes: 36, Kind: geometry.KindMotor, SpacingMM: f64(135), Left: fl, Right: fl},
		Rim: geometry.Rim{Holes: 36, ERDMM: 380, BSDMM: 406, InnerWidthMM: 30, HoleDiameterMM: 4.2,
			MaxTensionN: f64(1200)},
		Spoke: spoke.Spec{Gauge: intp(13), ElbowLengthMM: f64(6.0), Material: "stainless_steel"},
		Nipple: Nipple{Thread: spoke.Thread{Gauge: intp(13), TPI: f64(56)}, ShankDiameterMM: 4.5, HeadDiameterMM: 6.4,
			LengthMM: 14, Material: "brass"},
		Washers:        []Washer{{ThicknessMM: 0.8, InnerDiameterMM: 2.5, OuterDiameterMM: 7.0, Where: AtHub}},
		Tyre:           &Tyre{BSDMM: 406, WidthMM: 55},
		FrameSpacingMM: f64(135),
		Crosses:        crosses(2, 2),
		TargetTensionN: 1100,
	}
}
