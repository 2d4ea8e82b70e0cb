package fit

import "math"

func codes(fs []Finding, minSev Severity) []string {
	rank := map[Severity]int{Info: 0, Warning: 1, Error: 2}
	var out []string
	for _, f := range fs {
		if rank[f.Severity] >= rank[minSev] {
			s := f.Code
			if f.Side != "" {
				s += "/" + f.Side
			}
			out = append(out, s)
		}
	}
	return out
}

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }
