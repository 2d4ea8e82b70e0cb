// Package reftest is a test helper: it reads the reference tables in
// testdata/reference (published values with their source lines) for the
// tests of the pure packages. Only tests import it.
package reftest

import (
	"bufio"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// Rows returns the tab-separated, non-comment, non-blank rows of
// testdata/reference/<name>, found from the test's directory upward.
func Rows(t testing.TB, name string) [][]string {
	t.Helper()
	path := find(t, filepath.Join("testdata", "reference", name))
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var rows [][]string
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line := sc.Text()
		if strings.TrimSpace(line) == "" || strings.HasPrefix(line, "#") {
			continue
		}
		rows = append(rows, strings.Split(line, "\t"))
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return rows
}

// Float parses one cell as a number.
func Float(t testing.TB, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// find looks for rel in the working directory and its parents (the module
// root holds testdata/).
func find(t testing.TB, rel string) string {
	t.Helper()
	dir, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	for {
		p := filepath.Join(dir, rel)
		if _, err := os.Stat(p); err == nil {
			return p
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			t.Fatalf("%s not found above the test's directory", rel)
		}
		dir = parent
	}
}
