// Package analysis is the one way into Heatledger's engines: the page, the
// command-line tool and the JavaScript API all hand it files and settings
// and read back a report. This file holds the reading of files and their
// summary ("inspect").
package analysis

import (
	"errors"

	"heatledger/core/series"
)

// File is one input: a name (for messages) and its bytes.
type File struct {
	Name string
	Data []byte
}

// Loaded is the outcome of reading one file: its series and warnings, or an
// error that says where the file is wrong.
type Loaded struct {
	File   string
	Result *series.Result // nil when Err is set
	Err    error
}

// ErrPlace returns the file, line and column of a reading error when it has
// them.
func (l *Loaded) ErrPlace() (*series.Error, bool) {
	var e *series.Error
	if errors.As(l.Err, &e) {
		return e, true
	}
	return nil, false
}

// Load reads every file with the same options. It never panics: a failure in
// one file is that file's error.
func Load(files []File, opt series.Options) []Loaded {
	out := make([]Loaded, len(files))
	for i, f := range files {
		res, err := series.Read(f.Name, f.Data, opt)
		out[i] = Loaded{File: f.Name, Result: res, Err: err}
	}
	return out
}

// SeriesSummary is one series as the inspect report shows it.
type SeriesSummary struct {
	File       string  `json:"file"`
	Name       string  `json:"name"`
	Unit       string  `json:"unit"`
	Resolution string  `json:"resolution"`
	Start      float64 `json:"start"`
	End        float64 `json:"end"`
	StartLabel string  `json:"start_label"`
	EndLabel   string  `json:"end_label"`
	Count      int     `json:"count"`
	Missing    int     `json:"missing"`
}

// InspectReport lists every series read and every warning (prefixed with
// the file name) and error.
type InspectReport struct {
	Series   []SeriesSummary `json:"series"`
	Warnings []string        `json:"warnings"`
	Errors   []string        `json:"errors,omitempty"`
}

// Summarize describes one series: span, count of steps on its axis and of
// steps with no value.
func Summarize(s *series.Series) SeriesSummary {
	return SeriesSummary{
		File: s.Source, Name: s.Name, Unit: s.Unit, Resolution: s.Resolution.String(),
		Start: s.Start(), End: s.End(),
		StartLabel: series.StepLabel(s.Resolution, s.First), EndLabel: series.StepLabel(s.Resolution, s.Last()),
		Count: s.Len(), Missing: s.Missing(),
	}
}

// Inspect reads the files and summarises them.
func Inspect(files []File, opt series.Options) (InspectReport, []Loaded) {
	loaded := Load(files, opt)
	rep := InspectReport{Series: []SeriesSummary{}, Warnings: []string{}}
	for _, l := range loaded {
		if l.Err != nil {
			rep.Errors = append(rep.Errors, l.Err.Error())
			continue
		}
		for _, s := range l.Result.Series {
			rep.Series = append(rep.Series, Summarize(s))
		}
		for _, w := range l.Result.Warnings {
			rep.Warnings = append(rep.Warnings, l.File+": "+w)
		}
	}
	return rep, loaded
}
