// Package webhook owns the pure building blocks of outbound webhooks:
// signing secrets, the Standard Webhooks signature and headers (and their
// verification, for receivers and tests), the retry schedule, and the checks
// that keep deliveries away from private, loopback and other non-public
// destinations.
//
// It is pure: no context, no I/O, no logging; standard library only. It must
// not import net/http (nor anything else that does network I/O): sending is
// the HTTP layer's job, which calls CheckURL before a request and
// CheckAddr/AddrAllowed from its dialer for every address it connects to.
// net/netip and net/url are used for parsing only.
package webhook
