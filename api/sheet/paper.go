package sheet

import (
	"fmt"
	"strings"
)

// Paper is a sheet size the page is laid out for.
type Paper string

// The two sizes shops print on: ISO 216 A4 (210 × 297 mm) and US Letter
// (8.5 × 11 in). The layout fits inside both (at most 190 mm wide and
// 259 mm tall inside 10 mm margins); the paper only sets the page's CSS
// @page size, which a browser's print dialog takes as its default.
const (
	A4     Paper = "a4"
	Letter Paper = "letter"
)

// ParsePaper reads a ?paper= value.
func ParsePaper(s string) (Paper, error) {
	switch p := Paper(strings.ToLower(s)); p {
	case A4, Letter:
		return p, nil
	}
	return "", fmt.Errorf("paper must be a4 or letter, not %q", s)
}

// cssSize is the page size as CSS @page names it.
func (p Paper) cssSize() string {
	if p == Letter {
		return "letter"
	}
	return "A4"
}

// southAmericaA4 are the time zones of the Americas whose countries print
// on A4 (Brazil, Argentina, Uruguay, Paraguay, Bolivia, Peru, Ecuador and
// the Guianas; from memory). Bogotá, Caracas and Santiago stay on Letter.
var southAmericaA4 = map[string]bool{
	"America/Araguaina": true, "America/Bahia": true, "America/Belem": true, "America/Boa_Vista": true,
	"America/Campo_Grande": true, "America/Cuiaba": true, "America/Eirunepe": true, "America/Fortaleza": true,
	"America/Maceio": true, "America/Manaus": true, "America/Noronha": true, "America/Porto_Velho": true,
	"America/Recife": true, "America/Rio_Branco": true, "America/Santarem": true, "America/Sao_Paulo": true,
	"America/Buenos_Aires": true, "America/Catamarca": true, "America/Cordoba": true, "America/Jujuy": true,
	"America/Mendoza": true, "America/Montevideo": true, "America/Asuncion": true, "America/La_Paz": true,
	"America/Lima": true, "America/Guayaquil": true, "America/Guyana": true, "America/Paramaribo": true,
	"America/Cayenne": true,
}

// DefaultPaper is the paper a location prints on when the request does not
// say: locations have no paper setting, so it follows the location's time
// zone. Letter in the Americas (IANA zones America/…, and the older US/…,
// Canada/… and Mexico/… names, plus Pacific/Honolulu) and in the
// Philippines (Asia/Manila), where Letter is the usual office paper; A4
// everywhere else, UTC and unknown zones included, and in the South
// American zones of southAmericaA4. ?paper= always overrides it.
func DefaultPaper(timeZone string) Paper {
	tz := strings.TrimSpace(timeZone)
	switch {
	case southAmericaA4[tz] || strings.HasPrefix(tz, "America/Argentina/") || strings.HasPrefix(tz, "Brazil/"):
		return A4
	case strings.HasPrefix(tz, "America/"), strings.HasPrefix(tz, "US/"), strings.HasPrefix(tz, "Canada/"),
		strings.HasPrefix(tz, "Mexico/"), tz == "Pacific/Honolulu", tz == "Asia/Manila":
		return Letter
	}
	return A4
}
