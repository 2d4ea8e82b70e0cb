// Package tension owns the arithmetic of spoke tension: force units, a
// three-point tensiometer's calibration (its table of readings per spoke
// section), the fitted physical model of the tool, conversion between dial
// readings and tension with honest 95 % intervals, the audit of one wheel's
// readings, and the curves a chart of a calibration draws (api/chart draws
// them).
//
// Conversion follows an order of authority. A section that is a calibrated
// column is interpolated monotonically inside that column (method
// "column_monotone_cubic"). Anything else goes through the physical model of
// the tool (method "tool_model", or "tool_model_refined" when known-tension
// points refined that section): a tensioned beam between the anvils, a
// preloaded plunger spring, a dial offset and the tension the tool itself
// adds, fitted to every point of the calibration by Levenberg–Marquardt.
// Straight lines of reading against diameter are never used. An answer off
// the calibrated columns is never reported as more certain than the
// calibration beside it at the same tension (edge.go), and a profile no
// column has carries a warning to verify the tool against a known tension.
//
// Refused input is *field.Error, with an RFC 6901 pointer into the request
// body as the client sent it: 400 for a malformed or absurd value, 422 for
// one that is well-formed but impossible (the model cannot be identified,
// a column is not monotone, a reading is beyond what the tool can produce).
//
// The package is pure: no context, no I/O, no logging, deterministic. It
// imports the standard library, gonum (numerics), wheelbench/service/spoke
// (sections and materials) and wheelbench/service/field (the field-error
// type) only; it must not import the api, store or cmd packages, nor
// service itself.
//
// Units: forces in N, lengths in mm, moduli in GPa (1 GPa = 1000 N/mm²),
// readings in dial units of the tool (unit_mm millimetres each).
package tension
