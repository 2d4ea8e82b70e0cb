package store_test

import (
	"go/ast"
	"go/parser"
	"go/token"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestNoOrderByRenamedExpression keeps a class of bug out of the store's
// SQL. PostgreSQL resolves a bare name in ORDER BY (and DISTINCT ON) to an
// output column first, and in GROUP BY to an input column first, so
// "SELECT txid::text ... ORDER BY txid" sorts the text, not the xid8: the
// change feed once lost changes that way when ids gained a digit. Every
// statement in store/*.go (string constants, folded with the package's
// other constants) and in the migrations is checked: a bare ORDER BY, GROUP BY or DISTINCT ON
// name may not also name an expression in a select list. Qualify the
// column (c.txid) or give the expression another name.
func TestNoOrderByRenamedExpression(t *testing.T) {
	stmts := storeStatements(t)
	if len(stmts) < 20 {
		t.Fatalf("found %d SQL statements in store/*.go; the scan is broken", len(stmts))
	}
	migrations, err := filepath.Glob("migrations/*.sql")
	if err != nil || len(migrations) == 0 {
		t.Fatalf("migrations: %v %v", migrations, err)
	}
	for _, m := range migrations {
		b, err := os.ReadFile(m)
		if err != nil {
			t.Fatal(err)
		}
		stmts = append(stmts, statement{m, sqlComment.ReplaceAllString(string(b), "")})
	}
	for _, s := range stmts {
		if bad := renamedOrderKeys(s.sql); len(bad) > 0 {
			t.Errorf("%s: ORDER/GROUP BY %v names an expression of the select list; qualify the column or rename the expression:\n%s", s.pos, bad, s.sql)
		}
	}
}

// TestRenamedOrderKeysFindsTheTrap: the check above flags the statements
// that had the bug and passes their repairs.
func TestRenamedOrderKeysFindsTheTrap(t *testing.T) {
	for _, tc := range []struct {
		sql  string
		want []string
	}{
		{`SELECT txid::text, seq, type FROM changes WHERE org_id = $1 ORDER BY txid, seq LIMIT $5`, []string{"txid"}},
		{`SELECT c.txid, c.seq FROM changes c WHERE c.org_id = $1 ORDER BY c.txid, c.seq LIMIT $5`, nil},
		{`SELECT location_id, length_mm::float8, quantity FROM part_stock WHERE org_id = $1 ORDER BY location_id, length_mm`, []string{"length_mm"}},
		{`SELECT s.location_id, s.length_mm::float8 FROM part_stock s ORDER BY s.location_id, s.length_mm`, nil},
		{`SELECT lower(name) AS name FROM parts GROUP BY name`, []string{"name"}},
		{`SELECT DISTINCT ON (org_id) org_id, txid, seq FROM gone ORDER BY org_id, txid DESC, seq DESC`, nil},
		{`SELECT count(*) AS n, kind FROM parts GROUP BY kind ORDER BY n DESC`, []string{"n"}},
		{`SELECT id FROM (SELECT id, version + 1 AS version FROM t) x ORDER BY version`, []string{"version"}},
	} {
		got := renamedOrderKeys(tc.sql)
		if strings.Join(got, ",") != strings.Join(tc.want, ",") {
			t.Errorf("%s\n got %v, want %v", tc.sql, got, tc.want)
		}
	}
}

type statement struct {
	pos string
	sql string
}

// storeStatements folds every string constant expression in the store's
// non-test Go files (literals joined with + to the package's string
// constants) and keeps those that hold a SELECT.
func storeStatements(t *testing.T) []statement {
	t.Helper()
	files, err := filepath.Glob("*.go")
	if err != nil {
		t.Fatal(err)
	}
	fset := token.NewFileSet()
	var parsed []*ast.File
	for _, f := range files {
		if strings.HasSuffix(f, "_test.go") {
			continue
		}
		af, err := parser.ParseFile(fset, f, nil, 0)
		if err != nil {
			t.Fatal(err)
		}
		parsed = append(parsed, af)
	}
	consts := map[string]ast.Expr{}
	for _, af := range parsed {
		for _, d := range af.Decls {
			gd, ok := d.(*ast.GenDecl)
			if !ok || gd.Tok != token.CONST {
				continue
			}
			for _, sp := range gd.Specs {
				vs := sp.(*ast.ValueSpec)
				for i, n := range vs.Names {
					if i < len(vs.Values) {
						consts[n.Name] = vs.Values[i]
					}
				}
			}
		}
	}
	var fold func(e ast.Expr) (string, bool)
	fold = func(e ast.Expr) (string, bool) {
		switch e := e.(type) {
		case *ast.BasicLit:
			if e.Kind != token.STRING {
				return "", false
			}
			s, err := strconv.Unquote(e.Value)
			return s, err == nil
		case *ast.Ident:
			if v, ok := consts[e.Name]; ok {
				return fold(v)
			}
		case *ast.ParenExpr:
			return fold(e.X)
		case *ast.BinaryExpr:
			if e.Op == token.ADD {
				a, ok1 := fold(e.X)
				b, ok2 := fold(e.Y)
				return a + b, ok1 && ok2
			}
		}
		return "", false
	}
	var out []statement
	for _, af := range parsed {
		ast.Inspect(af, func(n ast.Node) bool {
			e, ok := n.(ast.Expr)
			if !ok {
				return true
			}
			if _, isLit := e.(*ast.BasicLit); !isLit {
				if b, isBin := e.(*ast.BinaryExpr); !isBin || b.Op != token.ADD {
					return true
				}
			}
			s, ok := fold(e)
			if !ok {
				return true // a partly constant sum: its literal parts are checked on their own
			}
			if selectWord.MatchString(s) {
				out = append(out, statement{fset.Position(e.Pos()).String(), s})
			}
			return false // the largest constant expression is the statement
		})
	}
	return out
}

var (
	sqlComment  = regexp.MustCompile(`--[^\n]*`)
	selectWord  = regexp.MustCompile(`(?i)\bSELECT\b`)
	orderClause = regexp.MustCompile(`(?i)\b(ORDER\s+BY|GROUP\s+BY|DISTINCT\s+ON)\b`)
	bareName    = regexp.MustCompile(`^[a-z_][a-z0-9_]*$`)
	columnRef   = regexp.MustCompile(`^(?:[a-z_][a-z0-9_]*\.)?([a-z_][a-z0-9_]*)$`)
	castOf      = regexp.MustCompile(`^(?:[a-z_][a-z0-9_]*\.)?([a-z_][a-z0-9_]*)\s*::`)
	callOf      = regexp.MustCompile(`^([a-z_][a-z0-9_]*)\s*\(`)
	asName      = regexp.MustCompile(`(?i)^(.*?)\s+AS\s+([a-z_][a-z0-9_]*)$`)
	keyTail     = regexp.MustCompile(`(?i)\s+(ASC|DESC|NULLS\s+FIRST|NULLS\s+LAST)\b.*$`)
)

// renamedOrderKeys returns the bare ORDER BY / GROUP BY / DISTINCT ON
// names of sql that some select list in it gives to an expression rather
// than to the plain column of that name. It reads SQL as our statements
// are written (no quoted identifiers, no comments); across subqueries it
// errs toward flagging.
func renamedOrderKeys(sql string) []string {
	low := strings.ToLower(sql)
	renamed := map[string]bool{}
	for _, loc := range selectWord.FindAllStringIndex(low, -1) {
		for _, item := range splitTop(selectList(low[loc[1]:])) {
			item = strings.TrimSpace(item)
			item = strings.TrimSpace(strings.TrimPrefix(item, "distinct"))
			if strings.HasPrefix(item, "on ") || strings.HasPrefix(item, "on(") {
				// DISTINCT ON (...) expr: drop the ON list, keep the expression after it.
				if end := closingParen(item, strings.Index(item, "(")); end > 0 {
					item = strings.TrimSpace(item[end+1:])
				}
			}
			if name, plain := outputName(item); name != "" && !plain {
				renamed[name] = true
			}
		}
	}
	var bad []string
	for _, loc := range orderClause.FindAllStringIndex(low, -1) {
		rest := low[loc[1]:]
		var keys []string
		if strings.HasPrefix(strings.TrimSpace(low[loc[0]:loc[1]]), "distinct") {
			open := strings.Index(rest, "(")
			end := closingParen(rest, open)
			if open < 0 || end < 0 {
				continue
			}
			keys = splitTop(rest[open+1 : end])
		} else {
			keys = splitTop(clauseBody(rest))
		}
		for _, k := range keys {
			k = strings.TrimSpace(keyTail.ReplaceAllString(strings.TrimSpace(k), ""))
			if bareName.MatchString(k) && renamed[k] {
				bad = append(bad, k)
			}
		}
	}
	return bad
}

// outputName is the name PostgreSQL gives a select-list item, and whether
// the item is that very column (plain) rather than an expression.
func outputName(item string) (name string, plain bool) {
	if m := asName.FindStringSubmatch(item); m != nil {
		expr := strings.TrimSpace(m[1])
		c := columnRef.FindStringSubmatch(expr)
		return m[2], c != nil && c[1] == m[2]
	}
	if columnRef.MatchString(item) || strings.HasSuffix(item, "*") {
		return "", true
	}
	if m := castOf.FindStringSubmatch(item); m != nil {
		return m[1], false
	}
	if m := callOf.FindStringSubmatch(item); m != nil {
		return m[1], false
	}
	return "", false
}

// selectList is the text after SELECT up to its FROM (or the end), at the
// same parenthesis depth.
func selectList(s string) string {
	depth := 0
	for i := 0; i < len(s); i++ {
		switch s[i] {
		case '(':
			depth++
		case ')':
			if depth == 0 {
				return s[:i]
			}
			depth--
		}
		if depth == 0 && isWordAt(s, i, "from") {
			return s[:i]
		}
	}
	return s
}

// clauseBody is an ORDER/GROUP BY list: up to the next clause keyword or a
// closing parenthesis at its depth.
func clauseBody(s string) string {
	depth := 0
	for i := 0; i < len(s); i++ {
		switch s[i] {
		case '(':
			depth++
		case ')':
			if depth == 0 {
				return s[:i]
			}
			depth--
		}
		if depth == 0 {
			for _, w := range []string{"limit", "offset", "for", "having", "window", "union", "returning", "fetch"} {
				if isWordAt(s, i, w) {
					return s[:i]
				}
			}
		}
	}
	return s
}

func isWordAt(s string, i int, w string) bool {
	if !strings.HasPrefix(s[i:], w) {
		return false
	}
	before := i == 0 || !isIdentByte(s[i-1])
	after := i+len(w) == len(s) || !isIdentByte(s[i+len(w)])
	return before && after
}

func isIdentByte(b byte) bool {
	return b == '_' || b == '.' || b >= 'a' && b <= 'z' || b >= '0' && b <= '9'
}

// splitTop splits s at commas outside parentheses.
func splitTop(s string) []string {
	var out []string
	depth, start := 0, 0
	for i := 0; i < len(s); i++ {
		switch s[i] {
		case '(':
			depth++
		case ')':
			depth--
		case ',':
			if depth == 0 {
				out = append(out, s[start:i])
				start = i + 1
			}
		}
	}
	return append(out, s[start:])
}

// closingParen is the index of the parenthesis closing the one at open.
func closingParen(s string, open int) int {
	if open < 0 {
		return -1
	}
	depth := 0
	for i := open; i < len(s); i++ {
		switch s[i] {
		case '(':
			depth++
		case ')':
			depth--
			if depth == 0 {
				return i
			}
		}
	}
	return -1
}
