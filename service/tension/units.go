package tension

// Force unit definitions.
const (
	// NewtonsPerKgf is the kilogram-force: 1 kg × standard gravity
	// 9.80665 m/s² (3rd CGPM, 1901), exact.
	NewtonsPerKgf = 9.80665
	// NewtonsPerLbf is the pound-force: the international pound 0.45359237 kg
	// (1959 agreement) × standard gravity, 4.4482216152605 N exactly.
	NewtonsPerLbf = 4.4482216152605
)

// KgfFromN converts newtons to kilograms-force.
func KgfFromN(n float64) float64 { return n / NewtonsPerKgf }

// NFromKgf converts kilograms-force to newtons.
func NFromKgf(kgf float64) float64 { return kgf * NewtonsPerKgf }

// LbfFromN converts newtons to pounds-force.
func LbfFromN(n float64) float64 { return n / NewtonsPerLbf }

// NFromLbf converts pounds-force to newtons.
func NFromLbf(lbf float64) float64 { return lbf * NewtonsPerLbf }
