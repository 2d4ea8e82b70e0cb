package service

import (
	"go/parser"
	"go/token"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestImportsKeepTheBoundary: the use cases touch neither HTTP nor SQL nor
// JSON bytes. No file of the package imports echo, pgx, net or net/http,
// and only webhooks.go imports encoding/json: the webhook payload's tags
// define the body every delivery carries. (Subpackages have their own
// rules: the pure ones test theirs; background sends webhooks over HTTP.)
// Parsed from the source files, so it holds whatever the build tags.
func TestImportsKeepTheBoundary(t *testing.T) {
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
			switch {
			case strings.HasPrefix(path, "github.com/labstack/"), strings.HasPrefix(path, "github.com/jackc/"),
				path == "net", strings.HasPrefix(path, "net/http"):
				t.Errorf("%s imports %s: service/ does no HTTP or SQL", name, path)
			case path == "encoding/json" && name != "webhooks.go":
				t.Errorf("%s imports encoding/json: JSON is read and written in api/ and store/ only", name)
			case strings.HasPrefix(path, "wheelbench/api"), strings.HasPrefix(path, "wheelbench/store"), strings.HasPrefix(path, "wheelbench/cmd"):
				t.Errorf("%s imports %s: nothing in service/ imports api, store or cmd", name, path)
			}
		}
	}
	if n == 0 {
		t.Fatal("no source files found")
	}
}
