package tension

// ModelVersion is the layout version of a serialised Model.
const ModelVersion = 1

// Model is everything conversion needs, computed once per calibration
// version by Fit and meant to be stored as JSON beside it (json.Marshal /
// json.Unmarshal round-trip it exactly). A Model is read-only after Fit;
// its methods are safe for concurrent use.
type Model struct {
	Version        int           `json:"version"`
	UnitMM         float64       `json:"unit_mm"`
	MeasuredSpanMM *float64      `json:"measured_span_mm,omitempty"`
	Columns        []ModelColumn `json:"columns"`
	// TensionRangeN is the lowest and highest tension in the calibration.
	TensionRangeN [2]float64 `json:"tension_range_n"`
	// Physical is the fitted tool model; nil when the calibration cannot
	// identify it (Unidentified says why). Without it only the calibrated
	// columns themselves convert.
	Physical     *PhysicalFit `json:"physical,omitempty"`
	Unidentified string       `json:"unidentified,omitempty"`
	// Warnings about the calibration as a whole (span mismatch, marginal
	// identification, plateaus); conversions repeat the relevant ones.
	Warnings []Warning `json:"warnings"`
}

// ModelColumn is one calibrated section with its properties and its
// interpolation curve.
type ModelColumn struct {
	Spoke       SpokeSpec `json:"spoke"`
	Source      string    `json:"source"`
	Points      []Point   `json:"points"`
	EINmm2      float64   `json:"ei_n_mm2"`
	EAN         float64   `json:"ea_n"`
	ThicknessMM float64   `json:"thickness_mm"`
	EGPa        float64   `json:"e_gpa"`
	// Curve is tension against reading through the column's points
	// (monotone cubic); absent with fewer than two distinct readings.
	Curve *ColumnCurve `json:"curve,omitempty"`
	// InFit tells whether the column's points entered the tool model fit.
	InFit bool `json:"in_fit"`
	// EIFactorIndex and OffsetIndex locate this section's refinement
	// parameters in PhysicalFit.Params (−1 when it has none).
	EIFactorIndex int `json:"ei_factor_index"`
	OffsetIndex   int `json:"offset_index"`
}

// ColumnCurve is a monotone piecewise-cubic Hermite curve of tension (N)
// against reading, with its knot slopes (N per dial unit).
type ColumnCurve struct {
	Readings       []float64 `json:"readings"`
	TensionsN      []float64 `json:"tensions_n"`
	SlopesNPerUnit []float64 `json:"slopes_n_per_unit"`
}

func (c *ColumnCurve) cubic() monotoneCubic {
	return monotoneCubic{X: c.Readings, Y: c.TensionsN, D: c.SlopesNPerUnit}
}

// PhysicalFit is the fitted tool model: parameters, their covariance and
// the residual statistics, in dial units.
type PhysicalFit struct {
	SpanMM       float64 `json:"span_mm"`
	PreloadN     float64 `json:"preload_n"`
	SpringNPerMM float64 `json:"spring_n_per_mm"`
	ZeroMM       float64 `json:"zero_mm"`
	StretchPerMM float64 `json:"stretch_per_mm"`
	// ParamNames, Params and SE list every fitted parameter: the five tool
	// parameters, then for each refined section "ei_factor[i]" and
	// "offset_units[i]" (i the column index).
	ParamNames []string    `json:"param_names"`
	Params     []float64   `json:"params"`
	SE         []float64   `json:"se"`
	Covariance [][]float64 `json:"covariance"`
	// ResidualSDUnits is s = √(RSS/(n − p)) in dial units.
	ResidualSDUnits float64 `json:"residual_sd_units"`
	Points          int     `json:"points"`
	DoF             int     `json:"dof"`
	// T975 is Student's t₀.₉₇₅ with DoF degrees of freedom.
	T975 float64 `json:"t_975"`
	// ConditionNumber is that of the column-scaled Jacobian at the solution.
	ConditionNumber float64 `json:"condition_number"`
	Iterations      int     `json:"iterations"`
}

// Warning is a finding attached to a model or a result.
type Warning struct {
	Code     string `json:"code"`
	Severity string `json:"severity"`
	Message  string `json:"message"`
}

// Warning codes.
const (
	// WarnStiffnessVerify: stiffness ratio beyond 1.3 — check one known tension.
	WarnStiffnessVerify = "stiffness_verify_known_tension"
	// WarnStiffnessCalibrate: beyond 1.6 — calibrate this size.
	WarnStiffnessCalibrate = "stiffness_calibrate_size"
	// WarnUnreliable: beyond 2.2, or an interval half-width above 5 %.
	WarnUnreliable = "result_unreliable"
	// WarnCoarseResolution: one dial unit is more than 3 % of the tension.
	WarnCoarseResolution = "coarse_resolution"
	// WarnSpanMismatch: fitted and measured anvil span differ by more than 3 %.
	WarnSpanMismatch = "span_mismatch"
	// WarnModelMarginal: the calibration identifies the tool only weakly.
	WarnModelMarginal = "model_marginal"
	// WarnColumnPlateau: a column repeats a reading at neighbouring tensions.
	WarnColumnPlateau = "column_plateau"
	// WarnOutsideTensionRange: the tension lies outside the calibrated range.
	WarnOutsideTensionRange = "tension_outside_calibration"
	// WarnNoToolModel: the calibration cannot identify the tool model.
	WarnNoToolModel = "tool_model_unavailable"
	// WarnResolutionOnlyInterval: no fitted scatter; the interval reflects
	// the dial's half-unit reading resolution only.
	WarnResolutionOnlyInterval = "interval_resolution_only"
	// WarnProfileNotCalibrated: no calibrated column has the section's
	// profile (a bladed or oval spoke on a round-only table): verify the
	// tool on this spoke against a known tension.
	WarnProfileNotCalibrated = "profile_not_in_calibration"
	// WarnIntervalWidened (info): the interval was widened so that an
	// answer off the calibrated columns is no more certain than the
	// calibration beside it at the same tension (edge.go).
	WarnIntervalWidened = "interval_widened_to_calibration"
)

// Method names of a result.
const (
	MethodColumn       = "column_monotone_cubic"
	MethodModel        = "tool_model"
	MethodModelRefined = "tool_model_refined"
)

// Statuses of a result.
const (
	StatusCalibrated   = "calibrated"
	StatusInterpolated = "interpolated"
	StatusExtrapolated = "extrapolated"
)
