package analysis

import (
	"fmt"
	"strconv"
	"strings"

	"heatledger/core/series"
)

// ReadingForm is the page's form for reading a file again with other
// options: every field as typed.
type ReadingForm struct {
	Delimiter string // "", comma, semicolon, tab or space
	Missing   string // "" = the default codes; "none"; or codes separated by commas or spaces
	Scale     string // "" = 1
	DateOrder string // "", dmy or mdy
	// MinDays is carried from an analysis file (the page has no field
	// for it): days a month of daily data needs; 0 is the default.
	MinDays int
}

// Reading turns the form into reading options, with a message naming the
// field that is wrong.
func (f ReadingForm) Reading() (ReadingOptions, error) {
	r := ReadingOptions{Delimiter: f.Delimiter, DateOrder: f.DateOrder, MinDays: f.MinDays}
	switch f.Delimiter {
	case "", "comma", "semicolon", "tab", "space":
	default:
		return r, fmt.Errorf("delimiter %q: expected comma, semicolon, tab or space", f.Delimiter)
	}
	switch f.DateOrder {
	case "", "dmy", "mdy":
	default:
		return r, fmt.Errorf("date order %q: expected dmy or mdy", f.DateOrder)
	}
	switch m := strings.TrimSpace(f.Missing); strings.ToLower(m) {
	case "":
	case "none":
		r.Missing = &[]float64{}
	default:
		var codes []float64
		for _, p := range strings.FieldsFunc(m, func(c rune) bool { return c == ',' || c == ' ' || c == ';' }) {
			v, err := strconv.ParseFloat(p, 64)
			if err != nil {
				return r, fmt.Errorf("missing-value codes: %q is not a number (give numbers separated by commas, or none)", p)
			}
			codes = append(codes, v)
		}
		r.Missing = &codes
	}
	if t := strings.TrimSpace(f.Scale); t != "" {
		v, err := strconv.ParseFloat(t, 64)
		if err != nil || v == 0 {
			return r, fmt.Errorf("scale %q: expected a number other than 0, e.g. 0.01 for hundredths", f.Scale)
		}
		r.Scale = v
	}
	return r, nil
}

// Options is the form as series reading options.
func (f ReadingForm) Options() (series.Options, error) {
	r, err := f.Reading()
	if err != nil {
		return series.Options{}, err
	}
	return r.Options()
}
