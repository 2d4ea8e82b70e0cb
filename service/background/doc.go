// Package background is wheelbench's work that runs beside the requests,
// not for one: the webhook dispatcher (claims due outbox rows through
// PostgreSQL, signs and sends them, records the outcome), its outbound
// HTTP client and metrics, and the janitor that prunes expired records.
// Every replica runs both; they share the work through the database.
//
// It imports service/webhook (signatures, retry schedule, destination
// checks) and the standard library's net/http for the outbound client; the
// store implements its Outbox and Pruner. Nothing in it serves HTTP.
package background
