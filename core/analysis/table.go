package analysis

import (
	"bytes"
	"encoding/csv"
	"strings"
)

// Table is a results table as every front end shows it: column headings
// (with units) and rows of text, already formatted.
type Table struct {
	Title   string     `json:"title"`
	Columns []string   `json:"columns"`
	Rows    [][]string `json:"rows"`
}

// TSV is the table as tab-separated text (for the clipboard): tabs and
// newlines inside cells become spaces.
func (t Table) TSV() string {
	var b strings.Builder
	clean := func(s string) string { return strings.NewReplacer("\t", " ", "\n", " ", "\r", " ").Replace(s) }
	write := func(row []string) {
		for i, c := range row {
			if i > 0 {
				b.WriteByte('\t')
			}
			b.WriteString(clean(c))
		}
		b.WriteByte('\n')
	}
	write(t.Columns)
	for _, r := range t.Rows {
		write(r)
	}
	return b.String()
}

// CSV is the table as RFC 4180 CSV. Cells that a spreadsheet would run as a
// formula (starting with =, +, - or @ and not a number) get a leading quote
// mark so an exported file cannot carry a formula.
func (t Table) CSV() string {
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	w.Write(t.Columns)
	for _, r := range t.Rows {
		row := make([]string, len(r))
		for i, c := range r {
			row[i] = defuse(c)
		}
		w.Write(row)
	}
	w.Flush()
	return b.String()
}

func defuse(c string) string {
	if c == "" {
		return c
	}
	switch c[0] {
	case '=', '+', '-', '@':
		if isNumberText(c) {
			return c
		}
		return "'" + c
	}
	return c
}

func isNumberText(s string) bool {
	for i, r := range s {
		switch {
		case r >= '0' && r <= '9', r == '.', r == 'e', r == 'E':
		case (r == '-' || r == '+') && (i == 0 || s[i-1] == 'e' || s[i-1] == 'E'):
		default:
			return false
		}
	}
	return true
}
