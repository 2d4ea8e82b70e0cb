// Package geometry owns the wheel geometry a builder needs before lacing:
// spoke lengths for J-bend and straight-pull hubs, the unloaded length to
// order once elastic stretch is taken off, stock-length choice, bracing and
// nipple angles, the left/right tension ratio from lateral force balance, and
// lacing feasibility (hole counts, the tangent limit, heads run over).
//
// Coordinates: the wheel axis is z, positive toward the left flange; z = 0 is
// the hub's centre plane midway between the locknuts. Sides are as a rider
// sees them; the drive side is right and a disc rotor sits on the left.
//
// The package is pure: no context, no I/O, no logging, deterministic. It
// imports the standard library and service/spoke only, and must not import
// the HTTP, store or service layers. Bad input comes back as *field.Error
// values (joined with errors.Join when several fields are wrong) that carry
// an RFC 6901 pointer into the request body.
package geometry
