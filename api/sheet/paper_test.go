package sheet

import "testing"

// TestDefaultPaper: the documented rule, zone by zone (which countries
// print on Letter is from memory; the rule is ours and ?paper= overrides
// it).
func TestDefaultPaper(t *testing.T) {
	for tz, want := range map[string]Paper{
		"":                               A4,
		"UTC":                            A4,
		"Europe/Lisbon":                  A4,
		"Africa/Nairobi":                 A4,
		"Asia/Tokyo":                     A4,
		"Australia/Hobart":               A4,
		"America/Chicago":                Letter,
		"America/Indiana/Indianapolis":   Letter,
		"America/Toronto":                Letter,
		"America/Mexico_City":            Letter,
		"America/Bogota":                 Letter,
		"US/Pacific":                     Letter,
		"Canada/Atlantic":                Letter,
		"Pacific/Honolulu":               Letter,
		"Asia/Manila":                    Letter,
		"America/Sao_Paulo":              A4,
		"America/Argentina/Buenos_Aires": A4,
		"America/Montevideo":             A4,
		"America/Lima":                   A4,
		"Not/A_Zone":                     A4,
	} {
		if got := DefaultPaper(tz); got != want {
			t.Errorf("DefaultPaper(%q) = %s, want %s", tz, got, want)
		}
	}
}

func TestParsePaper(t *testing.T) {
	for in, want := range map[string]Paper{"a4": A4, "A4": A4, "letter": Letter, "Letter": Letter} {
		if got, err := ParsePaper(in); err != nil || got != want {
			t.Errorf("ParsePaper(%q) = %q, %v", in, got, err)
		}
	}
	for _, in := range []string{"", "a5", "legal", "a4 "} {
		if _, err := ParsePaper(in); err == nil {
			t.Errorf("ParsePaper(%q) accepted", in)
		}
	}
}
