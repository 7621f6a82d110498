// Command hlbuild writes Heatledger's offline build outputs. build.sh runs
//
//	go run ./internal/distbuild/hlbuild -static static worker
//	    static/sw.js from static/sw.template.js, stamped with the build id
//	go run ./internal/distbuild/hlbuild -static static -o dist/heatledger.html dist
//	    the single-file app, and its size against the budget
package main

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"

	"heatledger/internal/distbuild"
)

// budgetBytes is the size budget of the single file (3.5 MB).
const budgetBytes = 3_500_000

func main() {
	static := flag.String("static", "static", "the built static directory")
	out := flag.String("o", "dist/heatledger.html", "the single file to write (dist)")
	flag.Usage = func() {
		fmt.Fprintln(os.Stderr, "usage: hlbuild [-static DIR] [-o FILE] worker|dist")
		flag.PrintDefaults()
	}
	flag.Parse()
	if flag.NArg() != 1 {
		flag.Usage()
		os.Exit(2)
	}
	var err error
	switch flag.Arg(0) {
	case "worker":
		err = worker(*static)
	case "dist":
		err = dist(*static, *out)
	default:
		flag.Usage()
		os.Exit(2)
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "hlbuild:", err)
		os.Exit(1)
	}
}

func worker(static string) error {
	src, id, err := distbuild.Worker(os.DirFS(static))
	if err != nil {
		return err
	}
	name := filepath.Join(static, distbuild.WorkerFile)
	if err := os.WriteFile(name, src, 0o644); err != nil {
		return err
	}
	fmt.Printf("%s: build %s, caches %d files\n", name, id, len(distbuild.Shell))
	return nil
}

func dist(static, out string) error {
	s, err := distbuild.SingleFile(os.DirFS(static))
	if err != nil {
		return err
	}
	if err := os.MkdirAll(filepath.Dir(out), 0o755); err != nil {
		return err
	}
	if err := os.WriteFile(out, s.HTML, 0o644); err != nil {
		return err
	}
	n := len(s.HTML)
	fmt.Printf("%s: %d bytes (%.2f MB; budget 3.50 MB), main.wasm %d bytes -> %d gzip -> base64 inline\n",
		out, n, float64(n)/1e6, s.WasmRaw, s.WasmGzip)
	if n > budgetBytes {
		fmt.Fprintf(os.Stderr, "hlbuild: WARNING: %s is %d bytes, over the 3.5 MB budget by %d bytes\n", out, n, n-budgetBytes)
	}
	return nil
}
