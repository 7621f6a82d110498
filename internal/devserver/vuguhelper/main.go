// Command vuguhelper writes vugu's DOM helper script to a file, so the page
// can load it with a <script src> tag instead of letting vugu's renderer pass
// it to window.eval, which the page's Content-Security-Policy forbids.
//
// The script is the constant jsHelperScript of vugu's domrender package,
// taken from the module's source (found with `go list -m`), so it always
// matches the vugu version the wasm program is built with. build.sh runs:
//
//	go run ./internal/devserver/vuguhelper -o static/vugu-render.js
package main

import (
	"bytes"
	"flag"
	"fmt"
	"go/ast"
	"go/parser"
	"go/token"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
)

const module = "github.com/vugu/vugu"

func main() {
	out := flag.String("o", "static/vugu-render.js", "file to write")
	flag.Parse()
	if err := run(*out); err != nil {
		fmt.Fprintln(os.Stderr, "vuguhelper:", err)
		os.Exit(1)
	}
}

func run(out string) error {
	cmd := exec.Command("go", "list", "-m", "-f", "{{.Dir}}\t{{.Version}}", module)
	cmd.Stderr = os.Stderr
	b, err := cmd.Output()
	if err != nil {
		return fmt.Errorf("go list -m %s: %w", module, err)
	}
	dir, version, _ := strings.Cut(strings.TrimSpace(string(b)), "\t")
	if dir == "" {
		return fmt.Errorf("module %s is not in the module cache; run go mod download", module)
	}
	script, err := helperScript(filepath.Join(dir, "domrender", "renderer-js-script.go"))
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	fmt.Fprintf(&buf, "// vugu %s domrender helper script (MIT licence, github.com/vugu/vugu), copied by build.sh. Do not edit.\n", version)
	buf.WriteString(script)
	buf.WriteString("\n")
	return os.WriteFile(out, buf.Bytes(), 0o644)
}

// helperScript returns the value of the string constant jsHelperScript.
func helperScript(path string) (string, error) {
	fset := token.NewFileSet()
	f, err := parser.ParseFile(fset, path, nil, 0)
	if err != nil {
		return "", err
	}
	for _, d := range f.Decls {
		gd, ok := d.(*ast.GenDecl)
		if !ok || gd.Tok != token.CONST {
			continue
		}
		for _, spec := range gd.Specs {
			vs := spec.(*ast.ValueSpec)
			for i, name := range vs.Names {
				if name.Name != "jsHelperScript" || i >= len(vs.Values) {
					continue
				}
				lit, ok := vs.Values[i].(*ast.BasicLit)
				if !ok || lit.Kind != token.STRING {
					return "", fmt.Errorf("%s: jsHelperScript is not a string literal", path)
				}
				return strconv.Unquote(lit.Value)
			}
		}
	}
	return "", fmt.Errorf("%s: no constant jsHelperScript (has vugu changed how it loads its helper?)", path)
}
