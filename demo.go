// Package heatledger holds the embedded demo world.
//
// Tessary is an invented world made by the generator in testdata/demo; its
// true parameters are in testdata/demo/truth.json. It is not real data.
package heatledger

import (
	"embed"
	"io/fs"
	"path"
	"sort"
)

//go:generate go run ./testdata/demo -out testdata/demo

// DemoFS holds the Tessary CSV files and truth.json under testdata/demo/.
//
//go:embed testdata/demo/*.csv testdata/demo/truth.json
var DemoFS embed.FS

// DemoFile is one embedded demo CSV file: its base name and its bytes.
type DemoFile struct {
	Name string
	Data []byte
}

// DemoFiles returns the Tessary CSV files (not truth.json), sorted by name.
func DemoFiles() []DemoFile {
	names, _ := fs.Glob(DemoFS, "testdata/demo/*.csv") // the pattern is valid
	sort.Strings(names)
	out := make([]DemoFile, 0, len(names))
	for _, n := range names {
		data, err := DemoFS.ReadFile(n)
		if err != nil {
			continue // cannot happen for a name Glob just returned
		}
		out = append(out, DemoFile{Name: path.Base(n), Data: data})
	}
	return out
}

// DemoTruth returns the bytes of truth.json: the parameters Tessary was made with.
func DemoTruth() []byte {
	data, _ := DemoFS.ReadFile("testdata/demo/truth.json") // always embedded
	return data
}
