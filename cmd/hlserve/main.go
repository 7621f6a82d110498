// Command hlserve serves Heatledger's static page for development:
//
//	go run ./cmd/hlserve [-dir static] [-addr :8080]
//
// The PORT environment variable, when set, overrides the port. The page
// itself needs no server: any static file host will do, as long as it sends
// main.wasm as application/wasm.
package main

import (
	"flag"
	"fmt"
	"log"
	"net"
	"net/http"
	"os"
	"path/filepath"
	"time"

	"heatledger/internal/devserver"
)

func main() {
	dir := flag.String("dir", "static", "directory to serve")
	addr := flag.String("addr", ":8080", "address to listen on (the PORT environment variable overrides the port)")
	flag.Usage = func() {
		fmt.Fprintf(flag.CommandLine.Output(), "usage: hlserve [-dir DIR] [-addr HOST:PORT]\n\nServes Heatledger's static page (build it first with ./build.sh build).\n\n")
		flag.PrintDefaults()
	}
	flag.Parse()
	if flag.NArg() > 0 {
		flag.Usage()
		os.Exit(2)
	}
	listen := *addr
	if p := os.Getenv("PORT"); p != "" {
		host, _, err := net.SplitHostPort(listen)
		if err != nil {
			host = ""
		}
		listen = net.JoinHostPort(host, p)
	}
	if fi, err := os.Stat(*dir); err != nil || !fi.IsDir() {
		log.Fatalf("hlserve: %s is not a directory", *dir)
	}
	if _, err := os.Stat(filepath.Join(*dir, "main.wasm")); err != nil {
		log.Printf("hlserve: %s has no main.wasm yet: run ./build.sh build", *dir)
	}
	ln, err := net.Listen("tcp", listen)
	if err != nil {
		log.Fatalf("hlserve: %v", err)
	}
	host, port, _ := net.SplitHostPort(ln.Addr().String())
	if ip := net.ParseIP(host); host == "" || (ip != nil && ip.IsUnspecified()) {
		host = "localhost"
	}
	log.Printf("hlserve: serving %s at http://%s/", *dir, net.JoinHostPort(host, port))
	srv := &http.Server{
		Handler:           devserver.Handler(*dir),
		ReadHeaderTimeout: 10 * time.Second,
	}
	log.Fatal(srv.Serve(ln))
}
