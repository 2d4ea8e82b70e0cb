package webhook

import (
	"fmt"
	"net/netip"
	"net/url"
	"strconv"
	"strings"

	"golang.org/x/net/idna"

	"wheelbench/service/field"
)

// MaxURLLength bounds an endpoint URL (common practice for URLs that must
// pass through proxies and logs).
const MaxURLLength = 2048

// AddrError says why an address may not be connected to.
type AddrError struct {
	Addr  netip.Addr
	Range string // the refused range and its source, "10.0.0.0/8 private-use (RFC 1918)"
}

func (e *AddrError) Error() string {
	return fmt.Sprintf("webhook: destination %s is in %s", e.Addr, e.Range)
}

// addrClass is how far a refused range is refused.
type addrClass int

const (
	// nonPublic ranges are refused unless allowPrivate: they are reachable
	// only inside a network (on-premises receivers and tests use them).
	nonPublic addrClass = iota
	// never ranges cannot be a unicast HTTP server at all.
	never
)

type addrRange struct {
	prefix netip.Prefix
	class  addrClass
	what   string // name and source
}

func r(prefix string, class addrClass, what string) addrRange {
	return addrRange{netip.MustParsePrefix(prefix), class, prefix + " " + what}
}

// refused lists every special-purpose range a delivery may not reach, most
// specific first within a family. IPv6 forms that embed an IPv4 address
// (IPv4-mapped, NAT64, 6to4) are checked by their embedded address.
var refused = []addrRange{
	r("0.0.0.0/8", never, `"this network" (RFC 1122, RFC 6890)`),
	r("10.0.0.0/8", nonPublic, "private-use (RFC 1918)"),
	r("100.64.0.0/10", nonPublic, "shared address space, carrier-grade NAT (RFC 6598)"),
	r("127.0.0.0/8", nonPublic, "loopback (RFC 1122)"),
	r("169.254.0.0/16", nonPublic, "link-local (RFC 3927)"),
	r("172.16.0.0/12", nonPublic, "private-use (RFC 1918)"),
	r("192.0.0.0/24", nonPublic, "IETF protocol assignments (RFC 6890)"),
	r("192.0.2.0/24", nonPublic, "documentation TEST-NET-1 (RFC 5737)"),
	r("192.88.99.0/24", nonPublic, "deprecated 6to4 relay anycast (RFC 7526)"),
	r("192.168.0.0/16", nonPublic, "private-use (RFC 1918)"),
	r("198.18.0.0/15", nonPublic, "benchmarking (RFC 2544)"),
	r("198.51.100.0/24", nonPublic, "documentation TEST-NET-2 (RFC 5737)"),
	r("203.0.113.0/24", nonPublic, "documentation TEST-NET-3 (RFC 5737)"),
	r("224.0.0.0/4", never, "multicast (RFC 5771)"),
	r("255.255.255.255/32", never, "limited broadcast (RFC 919, RFC 8190)"),
	r("240.0.0.0/4", never, "reserved (RFC 1112)"),

	r("::/128", never, "unspecified (RFC 4291)"),
	r("::1/128", nonPublic, "loopback (RFC 4291)"),
	r("::/96", never, "deprecated IPv4-compatible (RFC 4291)"),
	r("64:ff9b:1::/48", nonPublic, "local-use IPv4/IPv6 translation (RFC 8215)"),
	r("100::/64", never, "discard-only (RFC 6666)"),
	r("2001::/32", nonPublic, "Teredo (RFC 4380)"),
	r("2001:db8::/32", nonPublic, "documentation (RFC 3849)"),
	r("3fff::/20", nonPublic, "documentation (RFC 9637)"),
	r("fc00::/7", nonPublic, "unique local (RFC 4193)"),
	r("fe80::/10", nonPublic, "link-local (RFC 4291)"),
	r("fec0::/10", nonPublic, "deprecated site-local (RFC 3879)"),
	r("ff00::/8", never, "multicast (RFC 4291)"),
}

var (
	nat64     = netip.MustParsePrefix("64:ff9b::/96") // RFC 6052 well-known prefix
	sixToFour = netip.MustParsePrefix("2002::/16")    // RFC 3056
)

// CheckAddr returns nil when a delivery may connect to ip, else an
// *AddrError naming the range. Refused always: invalid addresses and ranges
// that are never a unicast server (unspecified, 0.0.0.0/8, multicast,
// broadcast, 240.0.0.0/4, discard-only). Refused unless allowPrivate:
// loopback, private-use, unique local, link-local, carrier-grade NAT,
// documentation, benchmarking and the other special-purpose ranges in the
// table above. IPv4-mapped (::ffff:a.b.c.d), NAT64 (64:ff9b::/96) and 6to4
// (2002::/16) addresses are judged by the IPv4 address they carry.
func CheckAddr(ip netip.Addr, allowPrivate bool) error {
	if !ip.IsValid() {
		return &AddrError{Addr: ip, Range: "no valid address"}
	}
	ip = ip.WithZone("")
	for {
		inner, ok := embeddedIPv4(ip)
		if !ok {
			break
		}
		ip = inner
	}
	for _, rg := range refused {
		if rg.prefix.Contains(ip) {
			if rg.class == nonPublic && allowPrivate {
				return nil
			}
			return &AddrError{Addr: ip, Range: rg.what}
		}
	}
	return nil
}

// AddrAllowed reports whether a delivery may connect to ip: CheckAddr(ip,
// allowPrivate) == nil.
func AddrAllowed(ip netip.Addr, allowPrivate bool) bool {
	return CheckAddr(ip, allowPrivate) == nil
}

// embeddedIPv4 returns the IPv4 address inside an IPv4-mapped, NAT64
// well-known-prefix or 6to4 address.
func embeddedIPv4(ip netip.Addr) (netip.Addr, bool) {
	if !ip.Is6() {
		return netip.Addr{}, false
	}
	b := ip.As16()
	switch {
	case ip.Is4In6():
		return ip.Unmap(), true
	case nat64.Contains(ip):
		return netip.AddrFrom4([4]byte(b[12:16])), true
	case sixToFour.Contains(ip):
		return netip.AddrFrom4([4]byte(b[2:6])), true
	}
	return netip.Addr{}, false
}

// CheckURL checks an endpoint URL before it is stored and before each
// delivery: absolute http or https, a host, no user info, a port (when
// given) from 1 to 65535, at most MaxURLLength bytes. A host that is an IP
// literal must pass CheckAddr; a host named localhost or *.localhost
// (RFC 6761) is refused unless allowPrivate, and a host that looks like a
// number but is no IP literal ("2130706433", "0x7f.1") is refused always.
// Names are judged after IDNA's lookup mapping (non-ASCII full stops,
// fullwidth forms). Host names are otherwise not resolved here: the sender
// checks every address it actually connects to. Errors are *field.Error at "/url":
// malformed (400) or refused destination (422).
func CheckURL(raw string, allowPrivate bool) error {
	const ptr = "/url"
	if len(raw) > MaxURLLength {
		return field.Invalid(ptr, "must be at most %d bytes", MaxURLLength)
	}
	u, err := url.Parse(raw)
	if err != nil {
		return field.Invalid(ptr, "is not a valid URL")
	}
	if u.Scheme != "https" && u.Scheme != "http" {
		return field.Invalid(ptr, "must be an absolute http or https URL")
	}
	if u.Opaque != "" || u.Host == "" {
		return field.Invalid(ptr, "must name a host (https://host/path)")
	}
	if u.User != nil {
		return field.Invalid(ptr, "must not contain a user name or password")
	}
	if p := u.Port(); p != "" || strings.HasSuffix(u.Host, ":") {
		n, err := strconv.Atoi(p)
		if err != nil || n < 1 || n > 65535 || p != strconv.Itoa(n) {
			return field.Invalid(ptr, "port must be a number from 1 to 65535")
		}
	}
	host := u.Hostname()
	if host == "" {
		return field.Invalid(ptr, "must name a host (https://host/path)")
	}
	if ip, err := netip.ParseAddr(host); err == nil {
		if ip.Zone() != "" {
			return field.Invalid(ptr, "must not carry an IPv6 zone")
		}
		if err := CheckAddr(ip, allowPrivate); err != nil {
			return field.Unprocessable(ptr, "must not point at %s", err.(*AddrError).Range)
		}
		return nil
	}
	if strings.Contains(u.Host, "[") {
		return field.Invalid(ptr, "has a bracketed host that is not an IPv6 address")
	}
	// A name is judged in the form a resolver looks up: IDNA's lookup
	// mapping (UTS #46) turns the ideographic and fullwidth full stops
	// (U+3002, U+FF0E, U+FF61) into dots, fullwidth digits and letters into
	// ASCII and letters to lower case, so "127。0。0。1" and "ｌｏｃａｌｈｏｓｔ"
	// are judged as 127.0.0.1 and localhost.
	ascii, err := idna.Lookup.ToASCII(host)
	if err != nil {
		return field.Invalid(ptr, "host is not a valid domain name")
	}
	if ip, err := netip.ParseAddr(ascii); err == nil {
		if err := CheckAddr(ip, allowPrivate); err != nil {
			return field.Unprocessable(ptr, "must not point at %s", err.(*AddrError).Range)
		}
		return nil
	}
	name := strings.TrimSuffix(strings.ToLower(ascii), ".")
	if name == "" {
		return field.Invalid(ptr, "must name a host (https://host/path)")
	}
	if looksNumeric(name) {
		return field.Invalid(ptr, "host must be a DNS name or a plain IP address")
	}
	if !allowPrivate && (name == "localhost" || strings.HasSuffix(name, ".localhost")) {
		return field.Unprocessable(ptr, "must not point at localhost (RFC 6761)")
	}
	return nil
}

// looksNumeric reports a host whose last label is all digits or hex
// ("0x…"): no DNS name ends so, but some resolvers read such hosts as
// IPv4 addresses in shorthand, octal or hex.
func looksNumeric(name string) bool {
	last := name[strings.LastIndexByte(name, '.')+1:]
	if last == "" {
		return false
	}
	if strings.HasPrefix(last, "0x") {
		return true
	}
	for _, c := range last {
		if c < '0' || c > '9' {
			return false
		}
	}
	return true
}
