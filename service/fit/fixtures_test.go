package fit

// Invented demo parts for tests; no real product is described.

func f64(x float64) *float64 { return &x }
func intp(n int) *int        { return &n }
func str(s string) *string   { return &s }

// roadFront is a plain 32-hole road front: 2.0 mm stainless spokes (typical
// head, elbow and thread filled by gauge), brass 12 mm nipples, a 622 rim of
// 19 mm inner width and a 25 mm tyre.
func roadFront() (Input, Geometry) {
	fl := Flange{PCDMM: 38, CenterToFlangeMM: 35, HoleDiameterMM: 2.6, ThicknessMM: 2.7}
	in := Input{
		SpokeCount: 32,
		Hub:        Hub{Holes: 32, Kind: Bicycle, Type: JBend, SpacingMM: f64(100), Left: fl, Right: fl},
		Rim: Rim{Holes: 32, ERDMM: 600, BSDMM: 622, InnerWidthMM: 19, HoleDiameterMM: 4.3,
			MaxTensionN: f64(1300)},
		Spoke: SpokeSpec{DiameterMM: f64(2.0), Material: str("stainless_steel")},
		Nipple: Nipple{Thread: Thread{DiameterMM: 2.0, TPI: 56}, ShankDiameterMM: 3.9, HeadDiameterMM: 5.6,
			LengthMM: 12, Material: str("brass")},
		Washers:        []Washer{{ThicknessMM: 0.5, InnerDiameterMM: 2.2, OuterDiameterMM: 5.0}},
		Tyre:           &Tyre{BSDMM: 622, WidthMM: 25},
		FrameSpacingMM: f64(100),
		Crosses:        Crosses{Left: 3, Right: 3},
		TargetTensionN: 1000,
	}
	side := SideGeometry{LengthMM: 292.4, StockLengthMM: f64(292), SpokeEndMM: f64(0), MaxCrosses: 3, BracingAngleDeg: 6.8}
	return in, Geometry{Left: side, Right: side, TensionRatioLeftToRight: 1}
}

// motorBuild is a 36-hole hub motor with 4.0 mm flange holes and 4.5 mm thick
// flanges, 13-gauge spokes with 6.0 mm elbows (head and thread by gauge),
// nipples whose 4.5 mm shank will not pass the 4.2 mm holes of a 406 rim, and
// a 0.8 mm hub washer on hand.
func motorBuild() (Input, Geometry) {
	fl := Flange{PCDMM: 150, CenterToFlangeMM: 22, HoleDiameterMM: 4.0, ThicknessMM: 4.5}
	in := Input{
		SpokeCount: 36,
		Hub:        Hub{Holes: 36, Kind: Motor, SpacingMM: f64(135), Left: fl, Right: fl},
		Rim: Rim{Holes: 36, ERDMM: 380, BSDMM: 406, InnerWidthMM: 30, HoleDiameterMM: 4.2,
			MaxTensionN: f64(1200)},
		Spoke: SpokeSpec{Gauge: intp(13), ElbowLengthMM: f64(6.0), Material: str("stainless_steel")},
		Nipple: Nipple{Thread: Thread{DiameterMM: 2.34, TPI: 56}, ShankDiameterMM: 4.5, HeadDiameterMM: 6.4,
			LengthMM: 14, Material: str("brass")},
		Washers:        []Washer{{ThicknessMM: 0.8, InnerDiameterMM: 2.5, OuterDiameterMM: 7.0, Where: AtHub}},
		Tyre:           &Tyre{BSDMM: 406, WidthMM: 55},
		FrameSpacingMM: f64(135),
		Crosses:        Crosses{Left: 2, Right: 2},
		TargetTensionN: 1100,
	}
	side := SideGeometry{LengthMM: 118.6, StockLengthMM: f64(118), SpokeEndMM: f64(0), MaxCrosses: 2, BracingAngleDeg: 10.2}
	return in, Geometry{Left: side, Right: side, TensionRatioLeftToRight: 1}
}
