package coilkick

import (
	"go/ast"
	"go/parser"
	"go/token"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// Limits of a function outside the tests: lines from "func" to the closing
// brace, and cyclomatic complexity (McCabe 1976, "A Complexity Measure",
// IEEE Trans. Software Eng. SE-2(4): 1 + one per if, for, range, non-
// default case and && or ||, as the gocyclo tool counts). The thresholds
// are common practice, no source.
const (
	maxFuncLines      = 80
	maxFuncComplexity = 20
)

// longMarker in a function's doc comment, followed by the reason, lets it
// exceed the limits (a table of data, a state machine read best whole).
const longMarker = "Long: "

// TestFunctionSize: no function of the module (outside tests) is longer
// than maxFuncLines or more complex than maxFuncComplexity unless its doc
// comment says why (longMarker).
func TestFunctionSize(t *testing.T) {
	t.Parallel()
	fset := token.NewFileSet()
	err := filepath.WalkDir(".", func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() {
			if path != "." && (d.Name() == "testdata" || strings.HasPrefix(d.Name(), ".")) {
				return filepath.SkipDir
			}
			return nil
		}
		if !strings.HasSuffix(path, ".go") || strings.HasSuffix(path, "_test.go") {
			return nil
		}
		f, err := parser.ParseFile(fset, path, nil, parser.ParseComments)
		if err != nil {
			return err
		}
		for _, decl := range f.Decls {
			fd, ok := decl.(*ast.FuncDecl)
			if !ok || fd.Body == nil {
				continue
			}
			pkg := filepath.ToSlash(filepath.Dir(path))
			if pkg == "." {
				pkg = "coilkick"
			}
			name := pkg + "." + funcName(fd)
			lines := fset.Position(fd.End()).Line - fset.Position(fd.Pos()).Line + 1
			cyc := complexity(fd)
			if lines <= maxFuncLines && cyc <= maxFuncComplexity || longReason(fd.Doc) != "" {
				continue
			}
			t.Errorf("%s (%s): %d lines, complexity %d, over %d lines or %d: split it, or say why in its doc comment (%q)",
				name, fset.Position(fd.Pos()), lines, cyc, maxFuncLines, maxFuncComplexity, longMarker)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
}

// funcName is Recv.Name or Name.
func funcName(fd *ast.FuncDecl) string {
	if fd.Recv == nil || len(fd.Recv.List) == 0 {
		return fd.Name.Name
	}
	typ := fd.Recv.List[0].Type
	if s, ok := typ.(*ast.StarExpr); ok {
		typ = s.X
	}
	if ix, ok := typ.(*ast.IndexExpr); ok {
		typ = ix.X
	}
	if id, ok := typ.(*ast.Ident); ok {
		return id.Name + "." + fd.Name.Name
	}
	return fd.Name.Name
}

// complexity is the cyclomatic complexity of a function (see the limits).
func complexity(fd *ast.FuncDecl) int {
	c := 1
	ast.Inspect(fd.Body, func(n ast.Node) bool {
		switch x := n.(type) {
		case *ast.IfStmt, *ast.ForStmt, *ast.RangeStmt:
			c++
		case *ast.CaseClause:
			if x.List != nil {
				c++
			}
		case *ast.CommClause:
			if x.Comm != nil {
				c++
			}
		case *ast.BinaryExpr:
			if x.Op == token.LAND || x.Op == token.LOR {
				c++
			}
		}
		return true
	})
	return c
}

// longReason returns the reason after longMarker in a doc comment, or "".
func longReason(doc *ast.CommentGroup) string {
	if doc == nil {
		return ""
	}
	text := doc.Text()
	k := strings.Index(text, longMarker)
	if k < 0 {
		return ""
	}
	reason := strings.TrimSpace(text[k+len(longMarker):])
	if len(reason) < 20 {
		return "" // a marker needs a reason
	}
	return reason
}

// TestComplexityCount: the counting rule on known shapes (McCabe: a
// straight function is 1, each decision adds 1).
func TestComplexityCount(t *testing.T) {
	t.Parallel()
	src := `package p
func a() {}
func b(x int) int { if x > 0 && x < 3 { return 1 }; for i := 0; i < x; i++ {}; switch x { case 1: case 2, 3: default: }; return 0 }
`
	f, err := parser.ParseFile(token.NewFileSet(), "p.go", src, 0)
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]int{"a": 1, "b": 6}
	for _, d := range f.Decls {
		fd := d.(*ast.FuncDecl)
		if got := complexity(fd); got != want[fd.Name.Name] {
			t.Errorf("complexity(%s) = %d, want %d", fd.Name.Name, got, want[fd.Name.Name])
		}
	}
}

// TestPackageMap: doc.go maps every file of the package and names only
// files and identifiers that exist, so the map cannot go stale silently.
func TestPackageMap(t *testing.T) {
	t.Parallel()
	fset := token.NewFileSet()
	paths, err := filepath.Glob("*.go")
	if err != nil {
		t.Fatal(err)
	}
	files := map[string]*ast.File{}
	for _, path := range paths {
		if strings.HasSuffix(path, "_test.go") {
			continue
		}
		if files[path], err = parser.ParseFile(fset, path, nil, parser.ParseComments); err != nil {
			t.Fatal(err)
		}
	}
	var doc string
	members := map[string]bool{} // "Type.Member" and top-level names
	for path, f := range files {
		if filepath.Base(path) == "doc.go" {
			doc = f.Doc.Text()
		}
		for _, decl := range f.Decls {
			switch d := decl.(type) {
			case *ast.FuncDecl:
				members[funcName(d)] = true
			case *ast.GenDecl:
				for _, spec := range d.Specs {
					ts, ok := spec.(*ast.TypeSpec)
					if !ok {
						continue
					}
					members[ts.Name.Name] = true
					if st, ok := ts.Type.(*ast.StructType); ok {
						for _, fl := range st.Fields.List {
							for _, n := range fl.Names {
								members[ts.Name.Name+"."+n.Name] = true
							}
						}
					}
				}
			}
		}
	}
	if doc == "" {
		t.Fatal("doc.go has no package comment")
	}
	// Every file named exists; every file is named, or is a section file
	// of the scenario_<section>.go pattern the map describes.
	named := map[string]bool{}
	for _, m := range regexp.MustCompile(`\b[a-z_]+\.go\b`).FindAllString(doc, -1) {
		named[m] = true
		if m == "scenario_<section>.go" {
			continue
		}
		if _, err := os.Stat(m); err != nil {
			t.Errorf("doc.go names %s, which does not exist", m)
		}
	}
	for path := range files {
		base := filepath.Base(path)
		if base != "doc.go" && !named[base] && !(strings.HasPrefix(base, "scenario_") && strings.Contains(doc, "scenario_<section>.go")) {
			t.Errorf("doc.go does not map %s", base)
		}
	}
	// Every Type.member it names exists (package-qualified names aside).
	for _, m := range regexp.MustCompile(`\b([A-Za-z]\w*)\.([A-Za-z]\w*)\b`).FindAllStringSubmatch(doc, -1) {
		switch m[1] {
		case "circuit", "magnet", "mech", "cmd", "coilkick":
			continue
		}
		if m[2] == "go" {
			continue
		}
		if !members[m[0]] {
			t.Errorf("doc.go names %s, which is not a method or field of the package", m[0])
		}
	}
}
