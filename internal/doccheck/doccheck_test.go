// Package doccheck holds one test: every exported identifier of gainsay's packages has a doc comment,
// and every package has a package doc (the rule of revive's "exported" check, kept here so that it
// needs no tool).
package doccheck

import (
	"go/ast"
	"go/doc"
	"go/parser"
	"go/token"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestExportedIdentifiersHaveDocComments(t *testing.T) {
	root := filepath.Join("..", "..")
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if !d.IsDir() {
			return nil
		}
		name := d.Name()
		if path != root && (strings.HasPrefix(name, ".") || name == "testdata" || name == "scripts" || name == "node_modules") {
			return filepath.SkipDir
		}
		checkPackage(t, path)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
}

func checkPackage(t *testing.T, dir string) {
	fset := token.NewFileSet()
	pkgs, err := parser.ParseDir(fset, dir, func(fi os.FileInfo) bool { return !strings.HasSuffix(fi.Name(), "_test.go") }, parser.ParseComments)
	if err != nil {
		t.Fatal(err)
	}
	for name, pkg := range pkgs {
		if name == "main" {
			continue
		}
		p := doc.New(pkg, dir, 0)
		if strings.TrimSpace(p.Doc) == "" {
			t.Errorf("%s: package %s has no package doc", dir, name)
		}
		missing := func(what, id, docText string, pos token.Pos) {
			if strings.TrimSpace(docText) == "" {
				t.Errorf("%s: %s %s has no doc comment", fset.Position(pos), what, id)
			}
		}
		for _, f := range p.Funcs {
			missing("func", f.Name, f.Doc, f.Decl.Pos())
		}
		for _, ty := range p.Types {
			missing("type", ty.Name, ty.Doc, ty.Decl.Pos())
			for _, f := range append(ty.Funcs, ty.Methods...) {
				missing("func", ty.Name+"."+f.Name, f.Doc, f.Decl.Pos())
			}
			checkValues(t, fset, ty.Consts)
			checkValues(t, fset, ty.Vars)
		}
		checkValues(t, fset, p.Consts)
		checkValues(t, fset, p.Vars)
	}
}

// checkValues accepts a documented group or a comment on each exported name.
func checkValues(t *testing.T, fset *token.FileSet, values []*doc.Value) {
	for _, v := range values {
		if strings.TrimSpace(v.Doc) != "" {
			continue
		}
		for _, spec := range v.Decl.Specs {
			vs := spec.(*ast.ValueSpec)
			for _, n := range vs.Names {
				if n.IsExported() && vs.Doc == nil && vs.Comment == nil {
					t.Errorf("%s: %s has no doc comment", fset.Position(n.Pos()), n.Name)
				}
			}
		}
	}
}
