package series

import (
	"bytes"
	"fmt"
	"math"
	"path"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Options adjust Read. The zero value detects everything.
type Options struct {
	// Delimiter: 0 detects; ',', ';' or '\t' force one; ' ' means runs of
	// spaces (fixed-width text tables).
	Delimiter rune
	// Sentinels are numeric codes meaning "missing". Nil means
	// DefaultSentinels; an empty non-nil slice means none.
	Sentinels []float64
	// Scale multiplies every value (for files of scaled integers, e.g. 0.01
	// for hundredths of a degree). 0 means 1.
	Scale float64
	// MaxBytes is the largest file accepted. 0 means DefaultMaxBytes.
	MaxBytes int
	// DateOrder resolves dates written D/M/Y or M/D/Y: "dmy" or "mdy".
	// Empty means such dates are refused as ambiguous.
	DateOrder string
	// MinDaysPerMonth is the completeness rule for daily data: a month's
	// mean needs at least this many days with values, else the month is
	// missing. 0 means DefaultMinDays.
	MinDaysPerMonth int
}

// DefaultSentinels are the numeric missing-value codes recognised unless
// Options.Sentinels says otherwise (common practice in climate text files).
var DefaultSentinels = []float64{-999, -999.9, -9999, -99.9, -99.99, -32768}

// DefaultMaxBytes is the size limit for one file (64 MiB).
const DefaultMaxBytes = 64 << 20

// DefaultMinDays is the default completeness rule for daily values: a month
// needs values on at least 20 of its days (common practice: roughly two
// thirds of a month).
const DefaultMinDays = 20

// Error is a reading error that says where: file, line and column (both
// 1-based; the column counts fields of the table) and what was expected.
type Error struct {
	File   string
	Line   int
	Column int
	Msg    string
}

func (e *Error) Error() string {
	return fmt.Sprintf("%s:%d:%d: %s", e.File, e.Line, e.Column, e.Msg)
}

// Result is what Read found in one file.
type Result struct {
	File      string
	Series    []*Series
	Warnings  []string
	Delimiter rune // the delimiter used (' ' for runs of spaces)
	Header    []string
	// Preview holds the first rows of the table as text, for display.
	Preview [][]string
}

// record is one row of the table: its fields and the line it starts on.
type record struct {
	line   int
	fields []string
}

// Read parses one text table into series. name labels the file in errors and
// becomes the series name of a wide (year x 12 months) table.
func Read(name string, data []byte, opt Options) (res *Result, err error) {
	defer func() {
		if r := recover(); r != nil {
			res, err = nil, &Error{File: name, Line: 1, Column: 1, Msg: fmt.Sprintf("internal error while reading: %v", r)}
		}
	}()
	r := &reader{name: name, opt: opt, res: &Result{File: name}}
	if err := r.run(data); err != nil {
		return nil, err
	}
	return r.res, nil
}

type reader struct {
	name    string
	opt     Options
	res     *Result
	delim   rune
	decComa bool
	recs    []record
	header  []string
	hline   int
	decConv string
	width   int
}

func (r *reader) fail(line, col int, format string, a ...any) error {
	if line < 1 {
		line = 1
	}
	if col < 1 {
		col = 1
	}
	return &Error{File: r.name, Line: line, Column: col, Msg: fmt.Sprintf(format, a...)}
}

func (r *reader) warn(format string, a ...any) {
	r.res.Warnings = append(r.res.Warnings, fmt.Sprintf(format, a...))
}

func (r *reader) run(data []byte) error {
	limit := r.opt.MaxBytes
	if limit <= 0 {
		limit = DefaultMaxBytes
	}
	if len(data) > limit {
		return r.fail(1, 1, "file is %s, over the size limit of %s", sizeText(len(data)), sizeText(limit))
	}
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	if i := bytes.IndexByte(data, 0); i >= 0 {
		line, col := placeOf(data, i)
		return r.fail(line, col, "the file holds binary data (a NUL byte): expected a text table such as CSV")
	}
	if !utf8.Valid(data) {
		line, _ := placeOf(data, invalidUTF8At(data))
		data = latin1ToUTF8(data)
		r.warn("the file is not UTF-8 (first bad byte on line %d): read as Latin-1", line)
	}
	text := string(data)
	if strings.TrimSpace(text) == "" {
		return r.fail(1, 1, "the file is empty: expected a table with a time column and at least one value column")
	}
	if err := r.detectDelimiter(text); err != nil {
		return err
	}
	res := r.res
	res.Delimiter = r.delim
	if err := r.tokenize(text); err != nil {
		return err
	}
	if len(r.recs) == 0 {
		return r.fail(1, 1, "the file holds only comments and blank lines: expected a table with a time column and at least one value column")
	}
	if err := r.findTable(); err != nil {
		return err
	}
	return r.build()
}

func sizeText(n int) string {
	if n >= 1<<20 {
		return fmt.Sprintf("%.1f MiB", float64(n)/(1<<20))
	}
	if n >= 1<<10 {
		return fmt.Sprintf("%.1f KiB", float64(n)/(1<<10))
	}
	return fmt.Sprintf("%d bytes", n)
}

// placeOf gives the line of byte offset i and its field number, counting
// the commonest of comma, semicolon and tab before it on that line.
func placeOf(b []byte, i int) (line, col int) {
	line = 1 + bytes.Count(b[:i], []byte("\n"))
	start := bytes.LastIndexByte(b[:i], '\n') + 1
	pre := b[start:i]
	col = 1
	for _, d := range []byte{',', ';', '\t'} {
		if c := bytes.Count(pre, []byte{d}) + 1; c > col {
			col = c
		}
	}
	return
}

func invalidUTF8At(b []byte) int {
	for i := 0; i < len(b); {
		c, size := utf8.DecodeRune(b[i:])
		if c == utf8.RuneError && size <= 1 {
			return i
		}
		i += size
	}
	return 0
}

func latin1ToUTF8(b []byte) []byte {
	out := make([]rune, 0, len(b))
	for _, c := range b {
		out = append(out, rune(c))
	}
	return []byte(string(out))
}

// isCommentLine: a line whose first non-blank character is # or %.
func isCommentLine(s string) bool {
	t := strings.TrimLeft(s, " \t")
	return strings.HasPrefix(t, "#") || strings.HasPrefix(t, "%")
}

// detectDelimiter looks at the non-comment lines of the first 64 KiB and at
// the last lines, counting fields outside quotes for each candidate, and
// picks the one that splits the most lines into the same number (>= 2) of
// fields. Semicolon and tab win ties over comma, because a file that splits
// evenly on semicolons uses commas as decimal marks. Runs of spaces are the
// fallback.
func (r *reader) detectDelimiter(text string) error {
	if r.opt.Delimiter != 0 {
		switch r.opt.Delimiter {
		case ',', ';', '\t', ' ':
			r.delim = r.opt.Delimiter
			r.decComa = r.delim != ','
			return nil
		}
		return r.fail(1, 1, "delimiter %q is not supported: use comma, semicolon, tab or space", r.opt.Delimiter)
	}
	sample := text
	if len(sample) > 64<<10 {
		sample = sample[:64<<10]
	}
	lines := sampleLines(sample)
	if len(text) > 64<<10 {
		tail := text[len(text)-(16<<10):]
		if i := strings.IndexByte(tail, '\n'); i >= 0 {
			tail = tail[i+1:]
		}
		lines = append(lines, sampleLines(tail)...)
	}
	best, bestScore := rune(' '), 0
	for _, d := range []rune{';', '\t', ','} {
		counts := map[int]int{}
		for _, ln := range lines {
			counts[countFields(ln, d)]++
		}
		score := 0
		for c, f := range counts {
			if c >= 2 && f > score {
				score = f
			}
		}
		// a candidate must split at least half the lines evenly
		if score > bestScore && 2*score >= len(lines) {
			best, bestScore = d, score
		}
	}
	r.delim = best
	r.decComa = best != ','
	return nil
}

func sampleLines(s string) []string {
	var out []string
	for _, ln := range strings.Split(s, "\n") {
		ln = strings.TrimRight(ln, "\r")
		if strings.TrimSpace(ln) == "" || isCommentLine(ln) {
			continue
		}
		out = append(out, ln)
	}
	return out
}

func countFields(line string, d rune) int {
	n, inq := 1, false
	for _, c := range line {
		switch {
		case c == '"':
			inq = !inq
		case c == d && !inq:
			n++
		}
	}
	return n
}

// tokenize splits the text into records: RFC 4180 quoting (a quoted field
// may hold the delimiter, doubled quotes and newlines), CRLF or LF line
// ends, blank and comment lines skipped. With the space delimiter a record
// is a line split on runs of blanks (quotes still group words).
func (r *reader) tokenize(text string) error {
	line := 1
	i := 0
	n := len(text)
	for i < n {
		// start of a line
		j := strings.IndexByte(text[i:], '\n')
		end := n
		if j >= 0 {
			end = i + j
		}
		raw := strings.TrimRight(text[i:end], "\r")
		if strings.TrimSpace(raw) == "" || isCommentLine(raw) {
			i = end + 1
			line++
			continue
		}
		startLine := line
		var fields []string
		var err error
		fields, i, line, err = r.parseRecord(text, i, line)
		if err != nil {
			return err
		}
		r.recs = append(r.recs, record{line: startLine, fields: fields})
		r.width = max(r.width, len(fields))
	}
	return nil
}

// parseRecord reads one record starting at byte i (the start of a line) and
// returns its fields, the offset just after its line end and the next line
// number.
func (r *reader) parseRecord(text string, i, line int) ([]string, int, int, error) {
	n := len(text)
	fields := make([]string, 0, r.width)
	var sb strings.Builder
	startLine := line
	if r.delim == ' ' {
		for {
			// skip blanks
			for i < n && (text[i] == ' ' || text[i] == '\t') {
				i++
			}
			if i >= n || text[i] == '\n' || text[i] == '\r' {
				break
			}
			sb.Reset()
			if text[i] == '"' {
				i++
				closed := false
				for i < n {
					if text[i] == '"' {
						if i+1 < n && text[i+1] == '"' {
							sb.WriteByte('"')
							i += 2
							continue
						}
						i++
						closed = true
						break
					}
					if text[i] == '\n' {
						line++
					}
					sb.WriteByte(text[i])
					i++
				}
				if !closed {
					return nil, 0, 0, r.fail(startLine, len(fields)+1, "a quoted field is never closed: expected a closing \" before the end of the file")
				}
			}
			j := i
			for j < n && text[j] != ' ' && text[j] != '\t' && text[j] != '\n' && text[j] != '\r' {
				j++
			}
			if sb.Len() > 0 {
				sb.WriteString(text[i:j])
				fields = append(fields, sb.String())
			} else {
				fields = append(fields, text[i:j])
			}
			i = j
		}
	} else {
		d := byte(r.delim)
		for {
			sb.Reset()
			// leading blanks before a quote are allowed
			k := i
			for k < n && (text[k] == ' ') {
				k++
			}
			if k < n && text[k] == '"' {
				i = k + 1
				closed := false
				for i < n {
					c := text[i]
					if c == '"' {
						if i+1 < n && text[i+1] == '"' {
							sb.WriteByte('"')
							i += 2
							continue
						}
						i++
						closed = true
						break
					}
					if c == '\n' {
						line++
					}
					sb.WriteByte(c)
					i++
				}
				if !closed {
					return nil, 0, 0, r.fail(startLine, len(fields)+1, "a quoted field is never closed: expected a closing \" before the end of the file")
				}
				// allow blanks after the closing quote
				for i < n && (text[i] == ' ' || text[i] == '\t' && d != '\t') {
					i++
				}
				if i < n && text[i] != d && text[i] != '\n' && text[i] != '\r' {
					return nil, 0, 0, r.fail(line, len(fields)+1, "text after a closing quote: expected the delimiter %s or the end of the line", delimName(r.delim))
				}
				fields = append(fields, sb.String())
			} else {
				j := i
				for j < n && text[j] != d && text[j] != '\n' {
					j++
				}
				fields = append(fields, strings.TrimRight(text[i:j], "\r"))
				i = j
			}
			if i < n && text[i] == d {
				i++
				continue
			}
			break
		}
	}
	// consume the line end
	for i < n && text[i] == '\r' {
		i++
	}
	if i < n && text[i] == '\n' {
		i++
	}
	line++
	return fields, i, line, nil
}

func delimName(d rune) string {
	switch d {
	case ',':
		return "comma"
	case ';':
		return "semicolon"
	case '\t':
		return "tab"
	}
	return "space"
}

// --- finding the table -----------------------------------------------------

// findTable decides the table width (the commonest field count among the
// last records), the header (the row just before the first data row) and
// drops free-text metadata lines above the header.
func (r *reader) findTable() error {
	// width: the commonest field count among up to the last 200 records
	counts := map[int]int{}
	from := len(r.recs) - 200
	if from < 0 {
		from = 0
	}
	for _, rec := range r.recs[from:] {
		counts[len(rec.fields)]++
	}
	width, freq := 0, -1
	for c, f := range counts {
		if f > freq || (f == freq && c > width) {
			width, freq = c, f
		}
	}
	if width < 2 {
		// one column: maybe one value per line without a time
		return r.fail(r.recs[0].line, 1, "found a single column: expected a time column and at least one value column separated by a comma, semicolon, tab or spaces")
	}
	// first data row: the first record of the table width whose first field
	// looks like a time or a number and is followed by rows of the same
	// width (or is the last).
	first := -1
	for i, rec := range r.recs {
		if len(rec.fields) == width && looksLikeTime(rec.fields[0]) {
			first = i
			break
		}
	}
	if first < 0 {
		// maybe the time is not in the first column: any row of the right
		// width with a numeric-looking field after a header row
		for i, rec := range r.recs {
			if len(rec.fields) == width && i > 0 && anyNumeric(rec.fields) && !anyNumeric(r.recs[i-1].fields) {
				first = i
				break
			}
		}
	}
	if first < 0 {
		last := r.recs[len(r.recs)-1]
		return r.fail(last.line, 1, "no row of numbers found: expected rows that start with a time (a year, YYYY-MM, YYYY-MM-DD or a decimal year) under a header")
	}
	hdr := -1
	if first > 0 {
		prev := r.recs[first-1]
		if len(prev.fields) == width {
			hdr = first - 1
		} else if r.delim == ' ' {
			if merged := mergeHeaderWords(prev.fields, width); merged != nil {
				r.recs[first-1].fields = merged
				hdr = first - 1
			}
		}
	}
	if hdr >= 0 {
		r.header = make([]string, width)
		for i, h := range r.recs[hdr].fields {
			r.header[i] = strings.TrimSpace(h)
		}
		r.hline = r.recs[hdr].line
	} else {
		r.header = make([]string, width)
		for i := range r.header {
			r.header[i] = fmt.Sprintf("column %d", i+1)
		}
		r.hline = r.recs[first].line
		if first > 0 {
			prev := r.recs[first-1]
			r.warn("line %d has %d fields but the table has %d: taken as a note, and the columns are named by number", prev.line, len(prev.fields), width)
		} else {
			r.warn("no header row: columns are named by number")
		}
	}
	if hdr > 0 || (hdr < 0 && first > 0) {
		skip := hdr
		if skip < 0 {
			skip = first
		}
		if a, b := r.recs[0].line, r.recs[skip-1].line; a == b {
			r.warn("skipped 1 line of notes above the table (line %d)", a)
		} else {
			r.warn("skipped %d lines of notes above the table (lines %d-%d)", skip, a, b)
		}
	}
	r.res.Header = append([]string(nil), r.header...)
	r.recs = r.recs[first:]
	for _, rec := range r.recs {
		if len(rec.fields) != width {
			return r.fail(rec.line, min(len(rec.fields), width)+1, "row has %d fields but the header has %d: expected %d fields separated by %s", len(rec.fields), width, width, delimName(r.delim))
		}
	}
	for i := 0; i < len(r.recs) && i < 10; i++ {
		r.res.Preview = append(r.res.Preview, append([]string(nil), r.recs[i].fields...))
	}
	return nil
}

// mergeHeaderWords joins header words of a space-delimited table so that
// units in brackets stay with their name: "anomaly (K)" is one column.
func mergeHeaderWords(words []string, width int) []string {
	var out []string
	for _, w := range words {
		if len(out) > 0 && (strings.HasPrefix(w, "(") || strings.HasPrefix(w, "[")) {
			out[len(out)-1] += " " + w
			continue
		}
		// inside an unclosed bracket
		if len(out) > 0 {
			p := out[len(out)-1]
			if strings.Count(p, "(") > strings.Count(p, ")") || strings.Count(p, "[") > strings.Count(p, "]") {
				out[len(out)-1] += " " + w
				continue
			}
		}
		out = append(out, w)
	}
	if len(out) != width {
		return nil
	}
	return out
}

func looksLikeTime(s string) bool {
	s = strings.TrimSpace(s)
	if s == "" {
		return false
	}
	if _, err := strconv.ParseFloat(s, 64); err == nil {
		return true
	}
	if _, _, _, ok := parseISODate(s); ok {
		return true
	}
	if _, _, _, ok := splitSlashDate(s); ok {
		return true
	}
	return false
}

func anyNumeric(fields []string) bool {
	for _, f := range fields {
		if _, err := strconv.ParseFloat(strings.TrimSpace(f), 64); err == nil {
			return true
		}
	}
	return false
}

// --- values ------------------------------------------------------------------

// parseValue reads one numeric cell. ok is false for text that is neither a
// number nor a missing-value token; missing is true for empty, NA, NaN, -,
// runs of * and sentinels.
func (r *reader) parseValue(s string) (v float64, missing, ok bool) {
	t := strings.TrimSpace(s)
	if isMissingToken(t) {
		return math.NaN(), true, true
	}
	if r.decComa && strings.IndexByte(t, ',') >= 0 {
		t = strings.Replace(t, ",", ".", 1)
	}
	if strings.HasPrefix(t, "\u2212") {
		t = "-" + t[len("\u2212"):]
	}
	f, err := strconv.ParseFloat(t, 64)
	if err != nil {
		if ne, isNum := err.(*strconv.NumError); isNum && ne.Err == strconv.ErrRange {
			return 0, false, false
		}
		return 0, false, false
	}
	if math.IsNaN(f) {
		return math.NaN(), true, true
	}
	if math.IsInf(f, 0) {
		return 0, false, false
	}
	sent := r.opt.Sentinels
	if sent == nil {
		sent = DefaultSentinels
	}
	for _, sv := range sent {
		if f == sv {
			return math.NaN(), true, true
		}
	}
	return f, false, true
}

func isMissingToken(t string) bool {
	if t != "" && (t[0] >= '0' && t[0] <= '9' || t[0] == '+' || (t[0] == '-' && len(t) > 1 && t[1] >= '0' && t[1] <= '9')) {
		return false
	}
	switch strings.ToLower(t) {
	case "", "na", "nan", "n/a", "-", "--", "---", "null", "none", "missing", ".":
		return true
	}
	if strings.Trim(t, "*") == "" {
		return true
	}
	return false
}

// splitNameUnit separates "anomaly (K)" or "forcing [W m-2]" into name and
// unit.
func splitNameUnit(h string) (name, unit string) {
	h = strings.TrimSpace(h)
	for _, p := range [][2]string{{"(", ")"}, {"[", "]"}} {
		if strings.HasSuffix(h, p[1]) {
			if i := strings.LastIndex(h, p[0]); i > 0 {
				return strings.TrimSpace(h[:i]), strings.TrimSpace(h[i+1 : len(h)-1])
			}
		}
	}
	return h, ""
}

// --- dates -------------------------------------------------------------------

// parseISODate reads YYYY-MM, YYYY-MM-DD, YYYY/MM or YYYY/MM/DD (with an
// optional time of day after T or a space, ignored). day is 0 when absent.
func parseISODate(s string) (y, m, d int, ok bool) {
	if len(s) > 10 {
		if i := strings.IndexAny(s, "T "); i > 0 {
			s = s[:i]
		}
	}
	if len(s) < 6 || (s[4] != '-' && s[4] != '/') {
		return 0, 0, 0, false
	}
	sep := s[4]
	if y, ok = digits(s[:4]); !ok {
		return 0, 0, 0, false
	}
	rest := s[5:]
	ms, ds := rest, ""
	if k := strings.IndexByte(rest, sep); k >= 0 {
		ms, ds = rest[:k], rest[k+1:]
		if ds == "" || len(ds) > 2 {
			return 0, 0, 0, false
		}
	}
	if len(ms) < 1 || len(ms) > 2 {
		return 0, 0, 0, false
	}
	if m, ok = digits(ms); !ok || m < 1 || m > 12 {
		return 0, 0, 0, false
	}
	if ds != "" {
		if d, ok = digits(ds); !ok || d < 1 || d > daysIn(y, m) {
			return 0, 0, 0, false
		}
	}
	return y, m, d, true
}

// digits reads a run of ASCII digits as a number.
func digits(s string) (int, bool) {
	if s == "" {
		return 0, false
	}
	v := 0
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c < '0' || c > '9' {
			return 0, false
		}
		v = v*10 + int(c-'0')
	}
	return v, true
}

// splitSlashDate reads a/b/YYYY or a.b.YYYY (day and month in some order).
func splitSlashDate(s string) (a, b, y int, ok bool) {
	sep := "/"
	if strings.Count(s, ".") == 2 {
		sep = "."
	}
	parts := strings.Split(s, sep)
	if len(parts) != 3 || len(parts[2]) != 4 {
		return 0, 0, 0, false
	}
	var err error
	if a, err = strconv.Atoi(parts[0]); err != nil || len(parts[0]) > 2 {
		return 0, 0, 0, false
	}
	if b, err = strconv.Atoi(parts[1]); err != nil || len(parts[1]) > 2 {
		return 0, 0, 0, false
	}
	if y, err = strconv.Atoi(parts[2]); err != nil {
		return 0, 0, 0, false
	}
	return a, b, y, a >= 1 && b >= 1 && a <= 31 && b <= 31
}

func isLeap(y int) bool { return y%4 == 0 && (y%100 != 0 || y%400 == 0) }

func daysIn(y, m int) int {
	switch m {
	case 2:
		if isLeap(y) {
			return 29
		}
		return 28
	case 4, 6, 9, 11:
		return 30
	}
	return 31
}

// DaysInMonth is the length of a month (1..12) in days.
func DaysInMonth(year, month int) int { return daysIn(year, month) }

var monthNames = []string{"jan", "feb", "mar", "apr", "may", "jun", "jul", "aug", "sep", "oct", "nov", "dec"}

// monthOfName maps "jan", "January", "JAN" to 1.
func monthOfName(h string) int {
	h = strings.ToLower(strings.TrimSpace(h))
	if len(h) < 3 {
		return 0
	}
	for i, m := range monthNames {
		full := []string{"january", "february", "march", "april", "may", "june", "july", "august", "september", "october", "november", "december"}[i]
		if h == m || h == full || (len(h) >= 3 && strings.HasPrefix(full, h)) {
			return i + 1
		}
	}
	return 0
}

// seasonCentre maps a three-month label (DJF, JFM, ..., NDJ) to its central
// month 1..12, or 0.
func seasonCentre(h string) int {
	h = strings.ToUpper(strings.TrimSpace(h))
	if len(h) != 3 {
		return 0
	}
	const letters = "JFMAMJJASOND"
	for start := 0; start < 12; start++ {
		ok := true
		for k := 0; k < 3; k++ {
			if letters[(start+k)%12] != h[k] {
				ok = false
				break
			}
		}
		if ok {
			return (start+1)%12 + 1
		}
	}
	return 0
}

// --- building series ----------------------------------------------------------

type timeKind int

const (
	kindNone timeKind = iota
	kindYear
	kindDecimalMonth
	kindYYYYMM
	kindISOMonth
	kindISODay
	kindSlashDay
)

// stamp is one row's time: a step index at the file's resolution, plus the
// day for daily rows.
type stamp struct {
	res   Resolution
	index int // month index or year
	day   int // 1..31 for daily rows, else 0
	text  string
}

func lowerName(h string) string {
	n, _ := splitNameUnit(h)
	return strings.ToLower(strings.TrimSpace(n))
}

func (r *reader) colIndex(names ...string) int {
	for i, h := range r.header {
		ln := lowerName(h)
		for _, n := range names {
			if ln == n {
				return i
			}
		}
	}
	return -1
}

func (r *reader) build() error {
	width := len(r.header)
	yearCol := r.colIndex("year", "yr", "years", "yyyy")
	// wide table: a year column and twelve month (or season) columns
	if yearCol >= 0 || strings.HasPrefix(r.header[0], "column ") {
		if ok, err := r.tryWide(yearCol); ok || err != nil {
			return err
		}
	}
	monthCol := r.colIndex("month", "mon", "mo", "mm")
	seasonCol := r.colIndex("season", "seas")
	if yearCol >= 0 && monthCol >= 0 {
		return r.buildLong(func(rec record) (stamp, error) {
			return r.yearMonthStamp(rec, yearCol, monthCol)
		}, []int{yearCol, monthCol})
	}
	if yearCol >= 0 && seasonCol >= 0 {
		return r.buildLong(func(rec record) (stamp, error) {
			return r.yearSeasonStamp(rec, yearCol, seasonCol)
		}, []int{yearCol, seasonCol})
	}
	tc := r.colIndex("date", "time", "decimal year", "decimal_year", "year", "yr", "t", "datetime", "period", "yyyymm")
	if tc < 0 {
		tc = 0
	}
	_ = width
	kind, err := r.detectKind(tc)
	if err != nil {
		return err
	}
	return r.buildLong(func(rec record) (stamp, error) { return r.columnStamp(rec, tc, kind) }, []int{tc})
}

// detectKind decides how the time column is written from its cells.
func (r *reader) detectKind(tc int) (timeKind, error) {
	var sawDecimal, sawInt, sawYYYYMM, sawISOMonth, sawISODay, sawSlash bool
	first := map[timeKind]record{}
	note := func(k timeKind, rec record) {
		if _, ok := first[k]; !ok {
			first[k] = rec
		}
	}
	for _, rec := range r.recs {
		s := strings.TrimSpace(rec.fields[tc])
		if s == "" {
			return 0, r.fail(rec.line, tc+1, "the time cell is empty: expected a time (a year, YYYY-MM, YYYY-MM-DD or a decimal year) in column %d (%s)", tc+1, r.header[tc])
		}
		if y, m, d, ok := parseISODate(s); ok {
			_ = y
			_ = m
			if d > 0 {
				sawISODay = true
				note(kindISODay, rec)
			} else {
				sawISOMonth = true
				note(kindISOMonth, rec)
			}
			continue
		}
		if _, _, _, ok := splitSlashDate(s); ok {
			sawSlash = true
			note(kindSlashDay, rec)
			continue
		}
		f, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
			return 0, r.fail(rec.line, tc+1, "found %q in the time column %s: expected a year, YYYY-MM, YYYY-MM-DD or a decimal year", clip(s), quoteName(r.header[tc]))
		}
		switch {
		case f == math.Trunc(f) && f >= 100000 && f <= 999912 && int(f)%100 >= 1 && int(f)%100 <= 12:
			sawYYYYMM = true
			note(kindYYYYMM, rec)
		case f == math.Trunc(f) && f >= 1 && f <= 9999:
			sawInt = true
			note(kindYear, rec)
		case f >= 1 && f < 10000:
			sawDecimal = true
			note(kindDecimalMonth, rec)
		default:
			return 0, r.fail(rec.line, tc+1, "found %q in the time column %s: expected a year between 1 and 9999, YYYY-MM, YYYY-MM-DD or a decimal year", clip(s), quoteName(r.header[tc]))
		}
	}
	kinds := 0
	for _, b := range []bool{sawDecimal || sawInt, sawYYYYMM, sawISOMonth, sawISODay, sawSlash} {
		if b {
			kinds++
		}
	}
	// integer years mixed with decimal years: the decimal ones decide (a
	// monthly decimal-year column has whole numbers for start-of-year
	// months) unless the step analysis finds annual data.
	if kinds > 1 && !(sawISOMonth && sawISODay) {
		return 0, r.mixedError(first)
	}
	switch {
	case sawISODay && sawISOMonth:
		return 0, r.mixedError(first)
	case sawISODay:
		return kindISODay, nil
	case sawISOMonth:
		return kindISOMonth, nil
	case sawSlash:
		return kindSlashDay, nil
	case sawYYYYMM:
		return kindYYYYMM, nil
	case sawDecimal:
		return r.decimalKind(tc)
	}
	return kindYear, nil
}

func (r *reader) mixedError(first map[timeKind]record) error {
	var ks []int
	for k := range first {
		ks = append(ks, int(k))
	}
	sort.Slice(ks, func(i, j int) bool { return first[timeKind(ks[i])].line < first[timeKind(ks[j])].line })
	a, b := first[timeKind(ks[0])], first[timeKind(ks[1])]
	return r.fail(b.line, 1, "mixed time formats: %q here but %q on line %d; expected one resolution and one format for the whole time column", clip(strings.TrimSpace(b.fields[0])), clip(strings.TrimSpace(a.fields[0])), a.line)
}

// decimalKind settles a decimal-year column: annual when every fraction is
// the same and consecutive rows are whole years apart; otherwise monthly,
// with the mid-month (year + (m-0.5)/12) or start-of-month
// (year + (m-1)/12) convention told apart from the fractions.
func (r *reader) decimalKind(tc int) (timeKind, error) {
	vals := make([]float64, len(r.recs))
	for i, rec := range r.recs {
		vals[i], _ = strconv.ParseFloat(strings.TrimSpace(rec.fields[tc]), 64)
	}
	frac0 := vals[0] - math.Floor(vals[0])
	sameFrac := true
	for _, v := range vals {
		f := v - math.Floor(v)
		if math.Abs(f-frac0) > 1e-6 {
			sameFrac = false
			break
		}
	}
	if sameFrac {
		r.decConv = "annual"
		if math.Abs(frac0-0.5) > 1e-6 && frac0 > 1e-6 {
			r.warn("decimal years all end in %.4g: read as annual values (placed at mid-year)", frac0)
		}
		return kindYear, nil
	}
	mid, start := 0, 0
	for _, v := range vals {
		x := v * 12
		if math.Abs(x-math.Round(x)) <= 0.2 {
			start++
		}
		if math.Abs(x-0.5-math.Round(x-0.5)) <= 0.2 {
			mid++
		}
	}
	switch {
	case mid >= start:
		r.decConv = "mid"
		r.warn("decimal-year times read as mid-month (year + (month - 0.5)/12, e.g. 1979.042 is January 1979)")
	default:
		r.decConv = "start"
		r.warn("decimal-year times read as start-of-month (year + (month - 1)/12, e.g. 1979.000 is January 1979)")
	}
	return kindDecimalMonth, nil
}

func (r *reader) columnStamp(rec record, tc int, kind timeKind) (stamp, error) {
	s := strings.TrimSpace(rec.fields[tc])
	bad := func(expect string) (stamp, error) {
		return stamp{}, r.fail(rec.line, tc+1, "found %q in the time column %s: expected %s", clip(s), quoteName(r.header[tc]), expect)
	}
	switch kind {
	case kindYear:
		f, err := strconv.ParseFloat(s, 64)
		if err != nil {
			return bad("a year")
		}
		if r.decConv == "annual" {
			f = math.Floor(f)
		}
		if f != math.Trunc(f) {
			return bad("a whole year like every other row")
		}
		return stamp{res: Annual, index: int(f), text: s}, nil
	case kindDecimalMonth:
		f, err := strconv.ParseFloat(s, 64)
		if err != nil {
			return bad("a decimal year")
		}
		x := f * 12
		if r.decConv == "mid" {
			x -= 0.5
		}
		k := math.Round(x)
		if math.Abs(x-k) > 0.2 {
			conv := "mid-month (year + (month - 0.5)/12)"
			if r.decConv == "start" {
				conv = "start-of-month (year + (month - 1)/12)"
			}
			return bad("a decimal year on the " + conv + " convention used by the other rows")
		}
		return stamp{res: Monthly, index: int(k), text: s}, nil
	case kindYYYYMM:
		f, err := strconv.ParseFloat(s, 64)
		if err != nil || f != math.Trunc(f) || int(f)%100 < 1 || int(f)%100 > 12 {
			return bad("YYYYMM")
		}
		v := int(f)
		return stamp{res: Monthly, index: MonthIndex(v/100, v%100), text: s}, nil
	case kindISOMonth, kindISODay:
		y, m, d, ok := parseISODate(s)
		if !ok {
			return bad("an ISO 8601 date (YYYY-MM or YYYY-MM-DD)")
		}
		if kind == kindISOMonth && d != 0 || kind == kindISODay && d == 0 {
			return bad("the same date format as the other rows")
		}
		return stamp{res: Monthly, index: MonthIndex(y, m), day: d, text: s}, nil
	case kindSlashDay:
		a, b, y, ok := splitSlashDate(s)
		if !ok {
			return bad("a date")
		}
		var d, m int
		switch r.opt.DateOrder {
		case "dmy":
			d, m = a, b
		case "mdy":
			m, d = a, b
		default:
			return bad("an unambiguous date: day/month/year and month/day/year cannot be told apart, so Heatledger does not guess; write dates as YYYY-MM-DD or set the date order (dmy or mdy)")
		}
		if m < 1 || m > 12 || d < 1 || d > daysIn(y, m) {
			return bad("a valid date in " + r.opt.DateOrder + " order")
		}
		return stamp{res: Monthly, index: MonthIndex(y, m), day: d, text: s}, nil
	}
	return bad("a time")
}

func (r *reader) intCell(rec record, col int, what string, lo, hi int) (int, error) {
	s := strings.TrimSpace(rec.fields[col])
	f, err := strconv.ParseFloat(s, 64)
	if err != nil || f != math.Trunc(f) || f < float64(lo) || f > float64(hi) {
		return 0, r.fail(rec.line, col+1, "found %q in column %s: expected %s", clip(s), quoteName(r.header[col]), what)
	}
	return int(f), nil
}

func (r *reader) yearMonthStamp(rec record, yc, mc int) (stamp, error) {
	y, err := r.intCell(rec, yc, "a whole year", 1, 9999)
	if err != nil {
		return stamp{}, err
	}
	ms := strings.TrimSpace(rec.fields[mc])
	m := monthOfName(ms)
	if m == 0 {
		if m, err = r.intCell(rec, mc, "a month 1-12 or a month name", 1, 12); err != nil {
			return stamp{}, err
		}
	}
	return stamp{res: Monthly, index: MonthIndex(y, m), text: rec.fields[yc] + " " + ms}, nil
}

func (r *reader) yearSeasonStamp(rec record, yc, sc int) (stamp, error) {
	y, err := r.intCell(rec, yc, "a whole year", 1, 9999)
	if err != nil {
		return stamp{}, err
	}
	ss := strings.TrimSpace(rec.fields[sc])
	c := seasonCentre(ss)
	if c == 0 {
		return stamp{}, r.fail(rec.line, sc+1, "found %q in column %s: expected a three-month season label such as DJF, JFM or NDJ", clip(ss), quoteName(r.header[sc]))
	}
	return stamp{res: Monthly, index: MonthIndex(y, c), text: rec.fields[yc] + " " + ss}, nil
}

// valueColumns picks the columns that hold numbers: every column but the
// time columns. A column with no number at all is text and is skipped with a
// warning; a numeric column with a stray word is an error at that cell.
func (r *reader) valueColumns(skip []int) ([]int, error) {
	var cols []int
	allEmpty := true
	for c := range r.header {
		if containsInt(skip, c) {
			continue
		}
		numeric := false
		for _, rec := range r.recs {
			if _, miss, ok := r.parseValue(rec.fields[c]); ok && !miss {
				numeric = true
				break
			}
		}
		if !numeric {
			allMissing := true
			for _, rec := range r.recs {
				if _, _, ok := r.parseValue(rec.fields[c]); !ok {
					allMissing = false
					break
				}
			}
			if !allMissing {
				allEmpty = false
			}
			if allMissing {
				r.warn("column %d %s has no values: skipped", c+1, quoteName(r.header[c]))
			} else {
				r.warn("column %d %s holds text, not numbers: skipped", c+1, quoteName(r.header[c]))
			}
			continue
		}
		cols = append(cols, c)
	}
	if len(cols) == 0 && allEmpty {
		return nil, r.fail(r.hline, 1, "no values found: every value column is empty or holds only missing-value marks")
	}
	if len(cols) == 0 {
		return nil, r.fail(r.hline, 1, "no numeric column: expected at least one column of numbers besides the time")
	}
	return cols, nil
}

func containsInt(xs []int, v int) bool {
	for _, x := range xs {
		if x == v {
			return true
		}
	}
	return false
}

func (r *reader) scale(v float64) float64 {
	if r.opt.Scale != 0 && r.opt.Scale != 1 {
		return v * r.opt.Scale
	}
	return v
}

// buildLong builds one series per value column from rows with one time each.
func (r *reader) buildLong(stampOf func(record) (stamp, error), timeCols []int) error {
	stamps := make([]stamp, len(r.recs))
	for i, rec := range r.recs {
		st, err := stampOf(rec)
		if err != nil {
			return err
		}
		stamps[i] = st
		if i > 0 {
			p := stamps[i-1]
			if st.res != p.res {
				return r.fail(rec.line, timeCols[0]+1, "mixed resolutions: %s here is %s but line %d is %s; expected one resolution per file", quoteName(st.text), st.res, r.recs[i-1].line, p.res)
			}
			cmp := st.index - p.index
			if cmp == 0 && st.day != 0 {
				cmp = st.day - p.day
			}
			if cmp == 0 {
				return r.fail(rec.line, timeCols[0]+1, "duplicate time %s: line %d has the same time; expected each time once", quoteName(st.text), r.recs[i-1].line)
			}
			if cmp < 0 {
				return r.fail(rec.line, timeCols[0]+1, "time goes backwards: %s comes after %s on line %d; expected times in increasing order", quoteName(st.text), quoteName(p.text), r.recs[i-1].line)
			}
		}
	}
	cols, err := r.valueColumns(timeCols)
	if err != nil {
		return err
	}
	daily := len(stamps) > 0 && stamps[0].day != 0
	if daily {
		// one row per month with a day stamp is monthly data dated by day
		perMonth := false
		for i := 1; i < len(stamps); i++ {
			if stamps[i].index == stamps[i-1].index {
				perMonth = true
				break
			}
		}
		daily = perMonth
	}
	res := stamps[0].res
	missing := 0
	for _, c := range cols {
		vals := make([]float64, len(r.recs))
		for i, rec := range r.recs {
			v, miss, ok := r.parseValue(rec.fields[c])
			if !ok {
				return r.fail(rec.line, c+1, "found %q in column %s: expected a number (or a missing-value mark: empty, NA, NaN, -, ***)", clip(strings.TrimSpace(rec.fields[c])), quoteName(r.header[c]))
			}
			if miss {
				missing++
			}
			vals[i] = r.scale(v)
		}
		name, unit := splitNameUnit(r.header[c])
		if name == "" {
			name = fmt.Sprintf("column %d", c+1)
		}
		var s *Series
		if daily {
			s = r.monthlyFromDaily(name, unit, stamps, vals)
		} else {
			lo, hi := stamps[0].index, stamps[len(stamps)-1].index
			axis := make([]float64, hi-lo+1)
			for i := range axis {
				axis[i] = math.NaN()
			}
			for i, st := range stamps {
				axis[st.index-lo] = vals[i]
			}
			s = New(name, unit, res, lo, axis)
		}
		r.add(s)
	}
	r.missingNote(missing)
	if daily {
		r.warn("daily values averaged to monthly means; a month needs values on at least %d days, else it is missing", r.minDays())
	}
	if r.opt.Scale != 0 && r.opt.Scale != 1 {
		r.warn("values multiplied by %g", r.opt.Scale)
	}
	return r.finish()
}

// missingNote says how many values were treated as missing: those inside
// the series' spans (the steps that count as missing), and apart from them
// the cells before a series' first or after its last value.
func (r *reader) missingNote(cells int) {
	if cells == 0 {
		return
	}
	inside := 0
	for _, s := range r.res.Series {
		inside += s.Missing()
	}
	marks := fmt.Sprintf("empty cells, NA, NaN, -, *** or sentinel codes %s", sentinelText(r.opt.Sentinels))
	switch {
	case inside > 0 && cells > inside:
		r.warn("%d value(s) inside the series' spans treated as missing (%s); %d more missing cells before a series' first or after its last value were left out", inside, marks, cells-inside)
	case inside > 0:
		r.warn("%d value(s) inside the series' spans treated as missing (%s)", inside, marks)
	default:
		r.warn("%d missing cell(s) before a series' first or after its last value were left out (%s)", cells, marks)
	}
}

func sentinelText(s []float64) string {
	if s == nil {
		s = DefaultSentinels
	}
	parts := make([]string, len(s))
	for i, v := range s {
		parts[i] = strconv.FormatFloat(v, 'g', -1, 64)
	}
	return strings.Join(parts, ", ")
}

func (r *reader) minDays() int {
	if r.opt.MinDaysPerMonth > 0 {
		return r.opt.MinDaysPerMonth
	}
	return DefaultMinDays
}

func (r *reader) monthlyFromDaily(name, unit string, stamps []stamp, vals []float64) *Series {
	lo, hi := stamps[0].index, stamps[len(stamps)-1].index
	sum := make([]float64, hi-lo+1)
	cnt := make([]int, hi-lo+1)
	for i, st := range stamps {
		if !math.IsNaN(vals[i]) {
			sum[st.index-lo] += vals[i]
			cnt[st.index-lo]++
		}
	}
	axis := make([]float64, len(sum))
	short := 0
	for i := range axis {
		y, m := YearMonth(lo + i)
		need := min(r.minDays(), daysIn(y, m))
		if cnt[i] >= need {
			axis[i] = sum[i] / float64(cnt[i])
		} else {
			axis[i] = math.NaN()
			if cnt[i] > 0 {
				short++
			}
		}
	}
	if short > 0 {
		r.warn("%s: %d month(s) had too few days with values and are missing", name, short)
	}
	return New(name, unit, Monthly, lo, axis)
}

// add trims leading and trailing missing steps and keeps the series if it
// has any value.
func (r *reader) add(s *Series) {
	s.Source = r.name
	a, b := 0, len(s.Values)
	for a < b && math.IsNaN(s.Values[a]) {
		a++
	}
	for b > a && math.IsNaN(s.Values[b-1]) {
		b--
	}
	if a == b {
		r.warn("%s has no values: skipped", quoteName(s.Name))
		return
	}
	if a > 0 || b < len(s.Values) {
		s = New(s.Name, s.Unit, s.Resolution, s.First+a, s.Values[a:b])
		s.Source = r.name
	}
	r.res.Series = append(r.res.Series, s)
}

func (r *reader) finish() error {
	if len(r.res.Series) == 0 {
		return r.fail(r.hline, 1, "no values found: every value column is empty or missing")
	}
	// unique names within a file
	seen := map[string]int{}
	for _, s := range r.res.Series {
		seen[s.Name]++
		if seen[s.Name] > 1 {
			s.Name = fmt.Sprintf("%s (%d)", s.Name, seen[s.Name])
		}
	}
	return nil
}

// tryWide reads a year column followed by twelve month columns (JAN..DEC, or
// season labels DJF..NDJ), and an optional annual column, unpivoting them
// into one monthly series named after the file.
func (r *reader) tryWide(yearCol int) (bool, error) {
	if yearCol < 0 {
		yearCol = 0
	}
	months := map[int]int{} // column -> month
	seasons := false
	for c, h := range r.header {
		if c == yearCol {
			continue
		}
		if m := monthOfName(h); m > 0 && len(strings.TrimSpace(h)) >= 3 {
			months[c] = m
		} else if m := seasonCentre(h); m > 0 {
			months[c] = m
			seasons = true
		}
	}
	headerless := strings.HasPrefix(r.header[0], "column ")
	if headerless && (len(r.header) == 13 || len(r.header) == 14) {
		for c := 1; c <= 12; c++ {
			months[c] = c
		}
	}
	if len(months) != 12 {
		return false, nil
	}
	used := map[int]bool{}
	for _, m := range months {
		used[m] = true
	}
	if len(used) != 12 {
		return false, nil
	}
	if headerless {
		// every first cell must be a whole year
		for _, rec := range r.recs {
			f, err := strconv.ParseFloat(strings.TrimSpace(rec.fields[0]), 64)
			if err != nil || f != math.Trunc(f) {
				return false, nil
			}
		}
		r.warn("no header: read as a wide table (a year, then twelve monthly values)")
	}
	var extra []int
	for c := range r.header {
		if c != yearCol && months[c] == 0 {
			extra = append(extra, c)
		}
	}
	// rows -> months
	prevYear, prevLine := 0, 0
	type cell struct {
		idx  int
		v    float64
		line int
	}
	var cells []cell
	missing := 0
	for i, rec := range r.recs {
		y, err := r.intCell(rec, yearCol, "a whole year", 1, 9999)
		if err != nil {
			return true, err
		}
		if i > 0 && y == prevYear {
			return true, r.fail(rec.line, yearCol+1, "duplicate year %d: line %d has the same year; expected each year once", y, prevLine)
		}
		if i > 0 && y < prevYear {
			return true, r.fail(rec.line, yearCol+1, "time goes backwards: year %d comes after %d on line %d; expected years in increasing order", y, prevYear, prevLine)
		}
		prevYear, prevLine = y, rec.line
		for c := 0; c < len(r.header); c++ {
			m := months[c]
			if m == 0 {
				continue
			}
			v, miss, ok := r.parseValue(rec.fields[c])
			if !ok {
				return true, r.fail(rec.line, c+1, "found %q in column %s: expected a number (or a missing-value mark: empty, NA, NaN, -, ***)", clip(strings.TrimSpace(rec.fields[c])), quoteName(r.header[c]))
			}
			if miss {
				missing++
			}
			cells = append(cells, cell{MonthIndex(y, m), r.scale(v), rec.line})
		}
	}
	sort.Slice(cells, func(i, j int) bool { return cells[i].idx < cells[j].idx })
	lo, hi := cells[0].idx, cells[len(cells)-1].idx
	axis := make([]float64, hi-lo+1)
	for i := range axis {
		axis[i] = math.NaN()
	}
	for _, c := range cells {
		axis[c.idx-lo] = c.v
	}
	base := path.Base(strings.ReplaceAll(r.name, "\\", "/"))
	if i := strings.LastIndex(base, "."); i > 0 {
		base = base[:i]
	}
	if base == "" {
		base = "series"
	}
	unit := ""
	if _, u := splitNameUnit(r.header[yearCol]); u != "" {
		unit = u
	}
	r.add(New(base, unit, Monthly, lo, axis))
	if seasons {
		r.warn("three-month seasons placed at their central month; the year column gives the year of the central month")
	}
	for _, c := range extra {
		r.warn("column %d %s is not a month: skipped (a wide table is read as twelve monthly columns)", c+1, quoteName(r.header[c]))
	}
	r.missingNote(missing)
	if r.opt.Scale != 0 && r.opt.Scale != 1 {
		r.warn("values multiplied by %g", r.opt.Scale)
	}
	r.warn("wide table (year x 12 months) unpivoted into one monthly series named %s", quoteName(base))
	return true, r.finish()
}

func clip(s string) string {
	if utf8.RuneCountInString(s) > 40 {
		rs := []rune(s)
		return string(rs[:40]) + "..."
	}
	return s
}

func quoteName(s string) string {
	return strconv.Quote(clip(s))
}
