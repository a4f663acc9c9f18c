package builtin_test

import (
	"context"
	"fmt"
	"go/ast"
	"go/parser"
	"go/token"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"semiflow/lang/builtin"
	"semiflow/lang/run"
)

// internalName matches what a reader must never see: our Go packages'
// qualified names (expo.Propagate) or message prefixes ("spectra: "), the
// library's name and its routines (gonum, LAPACK, Dgeev, mat.Eigen). A
// method is named in the trade's words with its published reference
// instead (Krylov–Schur is a method's name and allowed).
var internalName = regexp.MustCompile(`\b(expo|spectra|linop|solve|mmio|memguard|abandon|steady|pencil|gemm|roundoff|grid|objects|plot|value|eval)\.[A-Z]` +
	`|(^|: |\()(expo|spectra|linop|solve|mmio|memguard|abandon|pencil|gemm|roundoff): ` +
	`|(?i:\bgonum\b|\blapack\b|\bopenblas\b)` +
	`|\b[DZ](geev|hseqr|gehrd|orghr|trexc|gesvd|syev|gemm|trsm|potrf|getrf|stev|steqr|bdsqr|lasq)\b` +
	`|\bmat\.[A-Z]`)

// TestNoInternalNames scans what a reader sees — every builtin's
// documentation, every report and error in the golden scripts, and the
// text, HTML, Markdown and record of the analyses' reports — for the
// names of Semiflow's packages and routines and of the libraries under
// them.
func TestNoInternalNames(t *testing.T) {
	check := func(where, text string) {
		if m := internalName.FindString(text); m != "" {
			i := strings.Index(text, m)
			t.Errorf("%s shows the internal name %q: …%s…", where, m, text[max(0, i-60):min(len(text), i+60)])
		}
	}
	for _, b := range builtin.Default().All() {
		check("the documentation of "+b.Name, b.Doc)
		for _, p := range b.Params {
			check("the documentation of "+b.Name+"("+p.Name+")", p.Doc)
		}
	}
	files, _ := filepath.Glob("../../testdata/lang/*.sf")
	if len(files) < 10 {
		t.Fatalf("found %d golden scripts", len(files))
	}
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		for k, line := range strings.Split(string(data), "\n") {
			if strings.HasPrefix(line, "=> ") || strings.HasPrefix(line, "!! ") || strings.HasPrefix(line, "-> ") {
				check(fmt.Sprintf("%s:%d", filepath.Base(f), k+1), line)
			}
		}
	}
	s := run.NewSession()
	for _, code := range []string{
		"A = {-1, 5, 0 | 0, -2, 1 | 0, 0, -3}",
		"spectrum(A)", "abscissa(A)", "numrange(A, points=16)", "numabscissa(A)",
		"pseudospectrum(A, n=16)", "psabscissa(A, 0.1)", "resolvent(A, 1)", "resolventline(A, 0.5, n=20)",
		"growth(A, t=0 .. 2 by 0.5)", "kreiss(A)", "wellposed(A)", "markov({-1, 1 | 2, -2})",
		"spectrum(-laplacian(interval(0, 1, 302)), count=3)",
		"propagate(A, [1, 1, 1], [0.5, 1])", `propagate(A, [1, 1, 1], [1], method="krylov")`,
		`propagate(A, [1, 1, 1], [1], method="contour")`, "semigroup(A, 1)",
		"laplacian(interval(0, 1, 6))", "interval(0, 1, 6)",
	} {
		data, _, err := s.Execute(context.Background(), code, nil)
		if err != nil {
			t.Fatalf("%s: %v", code, err)
		}
		for _, mime := range []string{"text/plain", "text/html", "text/markdown"} {
			if x, ok := data[mime].(string); ok {
				check(code+" ("+mime+")", x)
			}
		}
		if rec, ok := data["application/json"]; ok {
			check(code+" (record)", fmt.Sprint(rec))
		}
	}
}

// sourceName matches, in a string literal of the code, an internal name a
// report could carry: a qualified Go name or the library and its routines
// (package prefixes of error messages are removed where errors reach the
// reader, so they are not looked for here).
var sourceName = regexp.MustCompile(`\b(expo|spectra|linop|solve|mmio|memguard|abandon|steady|pencil|gemm|roundoff|objects|plot)\.[A-Z]` +
	`|(?i:\bgonum\b|\blapack\b)` +
	`|\b[DZ](geev|hseqr|gehrd|orghr|trexc|gesvd|syev|gemm|trsm|potrf|getrf|stev|steqr|bdsqr|lasq)\b` +
	`|\bmat\.[A-Z]`)

// TestNoInternalNamesInStrings scans every string literal of the numerics
// and the language (tests and imports aside) for internal names, so that a
// method line or a note of a report computed only for large operators
// (too slow to run here) cannot name a routine either.
func TestNoInternalNamesInStrings(t *testing.T) {
	fset := token.NewFileSet()
	for _, root := range []string{"../../numerics", "../../lang"} {
		err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
			if err != nil || d.IsDir() || !strings.HasSuffix(path, ".go") || strings.HasSuffix(path, "_test.go") {
				return err
			}
			if strings.Contains(path, "numerics/gemm") {
				return nil // the build's description names its libraries by design
			}
			f, err := parser.ParseFile(fset, path, nil, parser.SkipObjectResolution)
			if err != nil {
				return err
			}
			ast.Inspect(f, func(n ast.Node) bool {
				if _, ok := n.(*ast.ImportSpec); ok {
					return false
				}
				lit, ok := n.(*ast.BasicLit)
				if !ok || lit.Kind != token.STRING {
					return true
				}
				s, err := strconv.Unquote(lit.Value)
				if err != nil {
					return true
				}
				if m := sourceName.FindString(s); m != "" {
					t.Errorf("%s: the string %q names %q", fset.Position(lit.Pos()), s, m)
				}
				return true
			})
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
	}
}
