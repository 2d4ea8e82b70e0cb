package webhook

import (
	"go/parser"
	"go/token"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// The package is pure: standard library only, and nothing that does
// network I/O (net/http and net itself). Parsed from the source files with
// go/parser, so it holds whatever the build tags.
func TestImportsArePure(t *testing.T) {
	files, err := filepath.Glob("*.go")
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, name := range files {
		if strings.HasSuffix(name, "_test.go") {
			continue
		}
		f, err := parser.ParseFile(token.NewFileSet(), name, nil, parser.ImportsOnly)
		if err != nil {
			t.Fatal(err)
		}
		n++
		for _, imp := range f.Imports {
			path, _ := strconv.Unquote(imp.Path.Value)
			first, _, _ := strings.Cut(path, "/")
			switch {
			case path == "golang.org/x/net/idna":
				// Pure: the IDNA mapping tables, no I/O.
			case strings.Contains(first, "."):
				t.Errorf("%s imports %s: not the standard library", name, path)
			case path == "net" || path == "net/http" || strings.HasPrefix(path, "net/http/"):
				t.Errorf("%s imports %s: service/ must not do network I/O", name, path)
			}
		}
	}
	if n == 0 {
		t.Fatal("no source files found")
	}
}
