// Package spokejson is the spoke-length routes' hand-written JSON codec: a
// wheel decoder (DecodeWheel), a result encoder (AppendResult) and the
// batch engine that splits a body of up to 10,000 wheels, decodes, computes
// and encodes them on every CPU and joins the answer (Batch.Answer). It is
// the only fan-out of a batch.
//
// It exists for the routes' time budget (a 10,000-wheel batch in 50 ms of
// server time, the single route at well over half a bare handler's rate)
// and is held to the general path in both directions: the decoder takes
// only the plain form of a wheel and steps aside to strictjson, the strict
// policy every other body goes through, for anything else, so it never
// decides an error (FuzzWheelParser and TestWheelParserAgrees); the encoder
// writes exactly what encoding/json writes (TestAppendResultMatches,
// TestAppendFloatFixed); a batch cut into parts answers byte for byte what
// one serial pass does (TestBatchAnswerAgrees).
//
// What it buys, measured with the benchmarks in compare_test.go on the
// 2-vCPU shared development host (the contract wheel, runs interleaved
// with -count 4 or 5; figures are the spread of those runs):
//
//   - decoding a wheel: 0.51–0.53 µs and no allocation by hand, against
//     5.8–5.9 µs and 46 allocations through strictjson and 5.7–5.8 µs and 26
//     allocations through encoding/json: about 11 times;
//   - encoding a result: 1.6 µs by hand, against 3.0–3.2 µs through
//     encoding/json (one allocation) and 3.2 µs through go-json-experiment
//     into a reused encoder and buffer (none; options set to write the
//     same bytes): about twice, so the library does not replace it;
//   - a 10,000-wheel batch in one goroutine: 36 ms and 10,011 allocations
//     with every wheel on the hand path, against 100–102 ms and 470,000
//     allocations with every wheel on the library path: about 2.8 times.
//
// It imports the pure geometry, fit and spoke packages, the field-error
// type, the JSON library and the strict policy (api/strictjson) only; the
// computation and the wording of a failed wheel's problem come in as
// functions (Batch.Compute, Batch.Problem), so it knows neither the
// service nor HTTP.
package spokejson
