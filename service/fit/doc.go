// Package fit owns the parts-compatibility rules of a wheel build: will this
// hub, rim, spokes, nipples, washers and tyre make a safe wheel, and exactly
// what must change (washers to add, rim holes to drill, parts to swap).
//
// It is pure: no context, no I/O, no logging, deterministic; standard library
// plus wheelbench/service/spoke (sections, materials, BS 3737 gauges). It must
// not import service/geometry: the spoke-length facts it needs arrive as a
// Geometry value that the caller fills from its own spoke-length calculation.
//
// Use: decode the request body into an Input, call Validate (field errors
// naming the JSON pointer of each bad field), compute the geometry, then
// Check. Every trade rule of thumb the rules rest on is a field of Options,
// marked "common practice" or "from memory" where it is defined.
package fit
