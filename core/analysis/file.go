package analysis

// The analysis file (*.heatledger.json) holds a whole piece of work: the
// data (the CSV text itself, with its reading options), the roles the page
// gave to series and every analysis with its settings. Run reproduces every
// number from it; Marshal writes it deterministically.

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"reflect"
	"sort"
	"strings"

	"heatledger/core/series"
)

// File format names and versions.
const (
	AnalysisFormat  = "heatledger-analysis"
	AnalysisVersion = 1
	// OldestAnalysisVersion is the oldest version read (older ones would
	// be migrated here; there are none yet).
	OldestAnalysisVersion = 1
	ReportFormat          = "heatledger-report"
	ReportVersion         = 1
	// AnalysisExt is the analysis file's name ending.
	AnalysisExt = ".heatledger.json"
)

// Analysis kinds, one per engine entry point of the Workspace.
const (
	KindTrend       = "trend"       // TrendSettings -> Trends
	KindCompare     = "compare"     // CompareSettings -> Compare
	KindGrid        = "grid"        // GridSettings -> Grid
	KindBreaks      = "breaks"      // BreaksSettings -> Breaks
	KindSen         = "sen"         // SenSettings -> Sen
	KindAdjust      = "adjust"      // AdjustSettings -> Adjust
	KindForcing     = "forcing"     // ForcingSettings -> Forcing
	KindRespond     = "respond"     // RespondSettings -> Respond
	KindHeat        = "heat"        // HeatSettings -> Heat
	KindSensitivity = "sensitivity" // SensitivitySettings -> Sensitivity
)

// Kinds lists the analysis kinds in a fixed order.
var Kinds = []string{KindTrend, KindCompare, KindGrid, KindBreaks, KindSen, KindAdjust, KindForcing, KindRespond, KindHeat, KindSensitivity}

var kindTypes = map[string]reflect.Type{
	KindTrend:       reflect.TypeFor[TrendSettings](),
	KindCompare:     reflect.TypeFor[CompareSettings](),
	KindGrid:        reflect.TypeFor[GridSettings](),
	KindBreaks:      reflect.TypeFor[BreaksSettings](),
	KindSen:         reflect.TypeFor[SenSettings](),
	KindAdjust:      reflect.TypeFor[AdjustSettings](),
	KindForcing:     reflect.TypeFor[ForcingSettings](),
	KindRespond:     reflect.TypeFor[RespondSettings](),
	KindHeat:        reflect.TypeFor[HeatSettings](),
	KindSensitivity: reflect.TypeFor[SensitivitySettings](),
}

// Roles a series may be given (free-form for the page; checked only
// against this list).
const (
	RoleTarget  = "target"
	RoleDriver  = "driver"
	RoleForcing = "forcing"
	RoleHeat    = "heat"
)

// Roles lists the allowed role values.
var Roles = []string{RoleTarget, RoleDriver, RoleForcing, RoleHeat}

// AnalysisFile is the content of a *.heatledger.json file. Read it with
// ParseAnalysisFile, write it with Marshal.
type AnalysisFile struct {
	Format    string `json:"format"`
	Version   int    `json:"version"`
	CreatedBy string `json:"created_by,omitempty"`
	// Files are the data files, their text embedded.
	Files []DataFile `json:"files"`
	// Roles maps a series reference (NAME or FILE:NAME) to its role.
	Roles map[string]string `json:"roles,omitempty"`
	// Analyses run in this order; their IDs are unique.
	Analyses []Analysis `json:"analyses"`
	// Brief is the briefing: the figures and tables of analyses it shows,
	// in order (core/brief writes its text).
	Brief *BriefSpec `json:"brief,omitempty"`
	// Page holds the page's form fields, view by view (view -> field ->
	// text), so that the page opens as it was saved. Every number comes
	// from Analyses; the command-line tool ignores Page.
	Page map[string]map[string]string `json:"page,omitempty"`
}

// BriefSpec is the briefing of an analysis file.
type BriefSpec struct {
	Title string      `json:"title,omitempty"`
	Items []BriefItem `json:"items"`
}

// BriefItem is one figure or table of the briefing: an analysis' ID and
// the name of one of its parts (see Workspace.Show; "" is its first
// figure).
type BriefItem struct {
	Analysis string `json:"analysis"`
	Part     string `json:"part,omitempty"`
	// Display is how the part is drawn where the page lets the user
	// choose (nil: the standard form).
	Display *Display `json:"display,omitempty"`
}

// Display holds the drawing choices of a figure that change no number:
// the smoothing drawn over a trend's data and its slope unit, and what the
// trend grid marks.
type Display struct {
	Smooth SmoothSettings `json:"smooth,omitzero"`
	Per    string         `json:"per,omitempty"`  // decade (default), year or century
	Mark   string         `json:"mark,omitempty"` // grid: zero (default) or full
}

// DataFile is one embedded data file.
type DataFile struct {
	Name    string         `json:"name"`
	Text    string         `json:"text"`
	Reading ReadingOptions `json:"reading,omitzero"`
}

// ReadingOptions are how a file is read (see series.Options).
type ReadingOptions struct {
	// Delimiter: comma, semicolon, tab or space (runs of spaces); empty
	// detects it.
	Delimiter string `json:"delimiter,omitempty"`
	// Missing are the numeric codes meaning missing; absent means the
	// default codes, an empty list none.
	Missing *[]float64 `json:"missing,omitempty"`
	// Scale multiplies every value; absent or 0 means 1.
	Scale float64 `json:"scale,omitempty"`
	// DateOrder of D/M/Y style dates: dmy or mdy; empty refuses them.
	DateOrder string `json:"date_order,omitempty"`
	// MinDays is the number of days with values a month of daily data
	// needs; absent or 0 means series.DefaultMinDays.
	MinDays int `json:"min_days,omitempty"`
}

// Analysis is one analysis: an ID (letters, digits, '.', '_' and '-'; it
// names its output file), its kind and its settings, a pointer to the
// kind's settings struct (*TrendSettings for "trend" and so on).
type Analysis struct {
	ID       string `json:"id"`
	Kind     string `json:"kind"`
	Settings any    `json:"settings"`
}

// NewAnalysisFile returns an empty analysis file of the current version.
func NewAnalysisFile() *AnalysisFile {
	return &AnalysisFile{Format: AnalysisFormat, Version: AnalysisVersion, CreatedBy: "Heatledger", Files: []DataFile{}, Analyses: []Analysis{}}
}

// KindOf returns the analysis kind of a settings value (a settings struct
// or a pointer to one), or "" when it is none.
func KindOf(settings any) string {
	t := reflect.TypeOf(settings)
	if t == nil {
		return ""
	}
	if t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	for _, k := range Kinds {
		if kindTypes[k] == t {
			return k
		}
	}
	return ""
}

// NewAnalysis makes an analysis of the kind of its settings (a settings
// struct or a pointer to one).
func NewAnalysis(id string, settings any) (Analysis, error) {
	k := KindOf(settings)
	if k == "" {
		return Analysis{}, fmt.Errorf("analysis %q: %T is not the settings of any analysis kind", id, settings)
	}
	v := reflect.ValueOf(settings)
	if v.Kind() != reflect.Pointer {
		p := reflect.New(v.Type())
		p.Elem().Set(v)
		v = p
	} else if v.IsNil() {
		v = reflect.New(v.Type().Elem())
	}
	if !validID.MatchString(id) {
		return Analysis{}, fmt.Errorf("analysis ID %q: expected letters, digits, '.', '_' or '-', not starting with '.'", id)
	}
	return Analysis{ID: id, Kind: k, Settings: v.Interface()}, nil
}

// UnmarshalJSON reads an analysis, its settings into the kind's struct,
// refusing unknown fields. ParseAnalysisFile says where a file is wrong;
// this is the plain decoding behind it.
func (a *Analysis) UnmarshalJSON(b []byte) error {
	var raw struct {
		ID       string          `json:"id"`
		Kind     string          `json:"kind"`
		Settings json.RawMessage `json:"settings"`
	}
	if err := strictUnmarshal(b, &raw); err != nil {
		return err
	}
	t, ok := kindTypes[raw.Kind]
	if !ok {
		return fmt.Errorf("analysis %q: unknown kind %q: expected %s", raw.ID, raw.Kind, strings.Join(Kinds, ", "))
	}
	v := reflect.New(t)
	if len(raw.Settings) > 0 && string(raw.Settings) != "null" {
		if err := strictUnmarshal(raw.Settings, v.Interface()); err != nil {
			return err
		}
	}
	a.ID, a.Kind, a.Settings = raw.ID, raw.Kind, v.Interface()
	return nil
}

func strictUnmarshal(b []byte, v any) error {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	return dec.Decode(v)
}

// Marshal writes the file deterministically: fields in a fixed order, map
// keys sorted, two-space indent, a final newline, no HTML escaping.
func (f *AnalysisFile) Marshal() ([]byte, error) {
	return marshalIndent(f)
}

func marshalIndent(v any) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// Options converts the reading options to series.Options.
func (r ReadingOptions) Options() (series.Options, error) {
	var o series.Options
	switch strings.ToLower(r.Delimiter) {
	case "":
	case "comma":
		o.Delimiter = ','
	case "semicolon":
		o.Delimiter = ';'
	case "tab":
		o.Delimiter = '\t'
	case "space":
		o.Delimiter = ' '
	default:
		return o, fmt.Errorf("delimiter %q: expected comma, semicolon, tab, space or nothing (detect)", r.Delimiter)
	}
	if r.Missing != nil {
		o.Sentinels = append([]float64{}, (*r.Missing)...)
	}
	if math.IsInf(r.Scale, 0) || math.IsNaN(r.Scale) {
		return o, fmt.Errorf("scale %v: expected a finite number", r.Scale)
	}
	o.Scale = r.Scale
	switch r.DateOrder {
	case "", "dmy", "mdy":
		o.DateOrder = r.DateOrder
	default:
		return o, fmt.Errorf("date_order %q: expected dmy, mdy or nothing", r.DateOrder)
	}
	if r.MinDays < 0 || r.MinDays > 31 {
		return o, fmt.Errorf("min_days %d: expected 1 to 31 (or 0 for the default %d)", r.MinDays, series.DefaultMinDays)
	}
	o.MinDaysPerMonth = r.MinDays
	return o, nil
}

// ReadingOf converts series.Options back to reading options (for saving
// files read with them).
func ReadingOf(o series.Options) ReadingOptions {
	r := ReadingOptions{Scale: o.Scale, DateOrder: o.DateOrder, MinDays: o.MinDaysPerMonth}
	if r.Scale == 1 {
		r.Scale = 0
	}
	if r.MinDays == series.DefaultMinDays {
		r.MinDays = 0
	}
	switch o.Delimiter {
	case ',':
		r.Delimiter = "comma"
	case ';':
		r.Delimiter = "semicolon"
	case '\t':
		r.Delimiter = "tab"
	case ' ':
		r.Delimiter = "space"
	}
	if o.Sentinels != nil {
		m := append([]float64{}, o.Sentinels...)
		r.Missing = &m
	}
	return r
}

// Workspace reads the embedded files, each with its own reading options.
// The error names the first file that failed to read, with where.
func (f *AnalysisFile) Workspace() (*Workspace, error) {
	w := &Workspace{}
	var first error
	for i, d := range f.Files {
		opt, err := d.Reading.Options()
		if err != nil {
			err = fmt.Errorf("files[%d] (%s): reading: %w", i, d.Name, err)
			w.Files = append(w.Files, Loaded{File: d.Name, Err: err})
		} else {
			w.Files = append(w.Files, Load([]File{{Name: d.Name, Data: []byte(d.Text)}}, opt)...)
		}
		if first == nil && w.Files[len(w.Files)-1].Err != nil {
			first = w.Files[len(w.Files)-1].Err
		}
	}
	return w, first
}

// FileError is a damaged or refused analysis file: where (1-based line and
// column, in characters; Path is the JSON path when known) and what.
type FileError struct {
	Name   string // the file's name, when known (set by the caller)
	Line   int
	Column int
	Path   string
	Msg    string
}

func (e *FileError) Error() string {
	if e.Name != "" {
		return fmt.Sprintf("%s:%d:%d: %s", e.Name, e.Line, e.Column, e.Msg)
	}
	return fmt.Sprintf("%d:%d: %s", e.Line, e.Column, e.Msg)
}

// MaxAnalysisFileBytes is the largest analysis file read (256 MiB).
const MaxAnalysisFileBytes = 256 << 20

// validID holds the rule for analysis ids: 1 to 100 letters, digits, '.',
// '_' or '-', not starting with '.' (so an id is a safe file name). Written
// by hand rather than as a regular expression, which would bring the whole
// regexp package into the page.
var validID = idRule{}

type idRule struct{}

func (idRule) MatchString(id string) bool {
	if len(id) == 0 || len(id) > 100 || id[0] == '.' {
		return false
	}
	for i := 0; i < len(id); i++ {
		c := id[i]
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '.' || c == '_' || c == '-') {
			return false
		}
	}
	return true
}

// ParseAnalysisFile reads an analysis file strictly: damaged JSON, unknown
// fields, values of the wrong type, a wrong format or version and bad
// settings are refused with a *FileError saying where.
func ParseAnalysisFile(data []byte) (*AnalysisFile, error) {
	at := func(off int, path, format string, args ...any) error {
		l, c := lineCol(data, off)
		return &FileError{Line: l, Column: c, Path: path, Msg: fmt.Sprintf(format, args...)}
	}
	if len(data) > MaxAnalysisFileBytes {
		return nil, at(0, "", "file is %.1f MiB, over the limit of %d MiB", float64(len(data))/(1<<20), MaxAnalysisFileBytes>>20)
	}
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, at(0, "", "empty file: expected a Heatledger analysis file (a JSON object)")
	}
	var tree any
	if err := json.Unmarshal(data, &tree); err != nil {
		var se *json.SyntaxError
		if errors.As(err, &se) {
			off, msg := syntaxMessage(data, se)
			return nil, at(off, "", "%s", msg)
		}
		return nil, at(0, "", "damaged JSON: %v", err)
	}
	top, ok := tree.(map[string]any)
	if !ok {
		return nil, at(skipSpace(data, 0), "", "expected a JSON object {...} at the top of an analysis file, found %s", describeValue(tree))
	}
	tpos := topPositions(data)
	// format and version first: a newer file is expected to hold fields
	// this version does not know.
	switch fm := top["format"].(type) {
	case nil:
		return nil, at(skipSpace(data, 0), "format", "not a Heatledger analysis file: no \"format\": %q", AnalysisFormat)
	case string:
		if fm != AnalysisFormat {
			if fm == ReportFormat {
				return nil, at(tpos["format"], "format", "this is a Heatledger report (format %q), not an analysis file (%q)", fm, AnalysisFormat)
			}
			return nil, at(tpos["format"], "format", "format %q: not a Heatledger analysis file (expected %q)", fm, AnalysisFormat)
		}
	default:
		return nil, at(tpos["format"], "format", "expected a string for format, found %s", describeValue(fm))
	}
	v, ok := top["version"].(float64)
	switch {
	case top["version"] == nil:
		return nil, at(skipSpace(data, 0), "version", "no \"version\": expected \"version\": %d", AnalysisVersion)
	case !ok || v != math.Trunc(v):
		return nil, at(tpos["version"], "version", "expected a whole number for version, found %s", describeValue(top["version"]))
	case v > AnalysisVersion:
		return nil, at(tpos["version"], "version", "analysis file version %v is newer than this Heatledger reads (version %d): open it with a newer Heatledger", v, AnalysisVersion)
	case v < OldestAnalysisVersion:
		return nil, at(tpos["version"], "version", "analysis file version %v is older than this Heatledger reads (versions %d to %d) and cannot be converted", v, OldestAnalysisVersion, AnalysisVersion)
	}
	// kinds of the analyses, to check each one's settings
	kinds := map[int]reflect.Type{}
	if list, ok := top["analyses"].([]any); ok {
		for i, a := range list {
			if m, ok := a.(map[string]any); ok {
				if k, ok := m["kind"].(string); ok && kindTypes[k] != nil {
					kinds[i] = kindTypes[k]
				}
			}
		}
	}
	w := &walker{data: data, pos: map[string]int{}, settings: kinds}
	if err := w.walk(); err != nil {
		return nil, err
	}
	if list, ok := top["analyses"].([]any); ok {
		for i, a := range list {
			p := fmt.Sprintf("analyses[%d].kind", i)
			m, _ := a.(map[string]any)
			k, _ := m["kind"].(string)
			if kindTypes[k] == nil {
				off, ok := w.pos[p]
				if !ok {
					off = w.pos[fmt.Sprintf("analyses[%d]", i)]
					return nil, at(off, p, "analyses[%d] has no \"kind\": expected one of %s", i, strings.Join(Kinds, ", "))
				}
				return nil, at(off, p, "unknown analysis kind %q for %s: expected one of %s", k, p, strings.Join(Kinds, ", "))
			}
		}
	}
	var f AnalysisFile
	if err := strictUnmarshal(data, &f); err != nil {
		// the walk should have caught it; say what is known
		var te *json.UnmarshalTypeError
		if errors.As(err, &te) {
			return nil, at(int(te.Offset), te.Field, "expected %s for %s, found %s", te.Type, te.Field, te.Value)
		}
		return nil, at(0, "", "%v", err)
	}
	if err := f.check(w.pos, at); err != nil {
		return nil, err
	}
	return &f, nil
}

// check verifies what the types alone do not: names, IDs, kinds, roles
// and reading options.
func (f *AnalysisFile) check(pos map[string]int, at func(int, string, string, ...any) error) error {
	where := func(path string) int {
		for p := path; p != ""; {
			if o, ok := pos[p]; ok {
				return o
			}
			i := strings.LastIndexAny(p, ".[")
			if i < 0 {
				break
			}
			p = p[:i]
		}
		return 0
	}
	if f.Files == nil {
		return at(0, "files", "no \"files\": expected a list of data files (it may be empty: [])")
	}
	if f.Analyses == nil {
		return at(0, "analyses", "no \"analyses\": expected a list of analyses (it may be empty: [])")
	}
	names := map[string]int{}
	for i, d := range f.Files {
		p := fmt.Sprintf("files[%d]", i)
		if strings.TrimSpace(d.Name) == "" {
			return at(where(p+".name"), p+".name", "%s has no name", p)
		}
		if j, dup := names[d.Name]; dup {
			return at(where(p+".name"), p+".name", "file name %q is given twice (files[%d] and %s)", d.Name, j, p)
		}
		names[d.Name] = i
		if _, err := d.Reading.Options(); err != nil {
			return at(where(p+".reading"), p+".reading", "%s (%s): %v", p, d.Name, err)
		}
	}
	ids := map[string]int{}
	for i, a := range f.Analyses {
		p := fmt.Sprintf("analyses[%d]", i)
		if !validID.MatchString(a.ID) {
			return at(where(p+".id"), p+".id", "analysis ID %q: expected 1 to 100 letters, digits, '.', '_' or '-', not starting with '.'", a.ID)
		}
		if j, dup := ids[a.ID]; dup {
			return at(where(p+".id"), p+".id", "analysis ID %q is given twice (analyses[%d] and %s)", a.ID, j, p)
		}
		ids[a.ID] = i
	}
	if f.Brief != nil {
		for i, it := range f.Brief.Items {
			p := fmt.Sprintf("brief.items[%d].analysis", i)
			if _, ok := ids[it.Analysis]; !ok {
				return at(where(p), p, "brief item %d names analysis %q, which the file does not hold", i+1, it.Analysis)
			}
		}
	}
	keys := make([]string, 0, len(f.Roles))
	for k := range f.Roles {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		ok := strings.TrimSpace(k) != ""
		r := f.Roles[k]
		if !ok || !contains(Roles, r) {
			p := "roles." + k
			return at(where(p), p, "role %q of series %q: expected %s", r, k, strings.Join(Roles, ", "))
		}
	}
	return nil
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// syntaxMessage turns a JSON syntax error into a place and a plain message.
func syntaxMessage(data []byte, se *json.SyntaxError) (int, string) {
	off := int(se.Offset)
	if off >= len(data) || strings.Contains(se.Error(), "unexpected end") {
		return len(data), "damaged JSON: the file ends too early (an object, list or string is not closed; was it cut short?)"
	}
	off = max(off-1, 0)
	c := data[off]
	prev := off - 1
	for prev >= 0 && strings.IndexByte(" \t\r\n", data[prev]) >= 0 {
		prev--
	}
	switch {
	case (c == '}' || c == ']') && prev >= 0 && data[prev] == ',':
		return prev, fmt.Sprintf("damaged JSON: a comma before %q (JSON allows no trailing comma)", c)
	case c == '\'':
		return off, "damaged JSON: a single quote: JSON strings and names take double quotes"
	case strings.Contains(se.Error(), "after object key:value pair") || strings.Contains(se.Error(), "after array element"):
		return off, fmt.Sprintf("damaged JSON: expected a comma or a closing bracket, found %q (a missing comma?)", c)
	case strings.Contains(se.Error(), "after top-level value"):
		return off, fmt.Sprintf("damaged JSON: text after the end of the analysis file's object (%q)", c)
	}
	msg := strings.TrimPrefix(se.Error(), "json: ")
	return off, "damaged JSON: " + msg
}

// lineCol turns a byte offset into a 1-based line and column (characters).
func lineCol(data []byte, off int) (int, int) {
	off = min(max(off, 0), len(data))
	line := 1 + bytes.Count(data[:off], []byte{'\n'})
	start := bytes.LastIndexByte(data[:off], '\n') + 1
	return line, 1 + len([]rune(string(data[start:off])))
}

func skipSpace(data []byte, off int) int {
	for off < len(data) && strings.IndexByte(" \t\r\n,:", data[off]) >= 0 {
		off++
	}
	return off
}

func describeValue(v any) string {
	switch x := v.(type) {
	case nil:
		return "null"
	case string:
		return fmt.Sprintf("a string (%q)", x)
	case float64, json.Number:
		return fmt.Sprintf("a number (%v)", x)
	case bool:
		return fmt.Sprintf("%v", x)
	case []any:
		return "a list"
	case map[string]any:
		return "an object"
	}
	return fmt.Sprintf("%v", v)
}

// topPositions returns the offset of each top-level member's value.
func topPositions(data []byte) map[string]int {
	out := map[string]int{}
	dec := json.NewDecoder(bytes.NewReader(data))
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return out
	}
	for dec.More() {
		t, err := dec.Token()
		if err != nil {
			return out
		}
		k, _ := t.(string)
		out[k] = skipSpace(data, int(dec.InputOffset()))
		var skip json.RawMessage
		if dec.Decode(&skip) != nil {
			return out
		}
	}
	return out
}

// walker checks a JSON document against Go types token by token, so a
// wrong value is refused with its place and path.
type walker struct {
	data     []byte
	dec      *json.Decoder
	pos      map[string]int
	settings map[int]reflect.Type // analyses[i] -> settings type
}

func (w *walker) walk() error {
	w.dec = json.NewDecoder(bytes.NewReader(w.data))
	w.dec.UseNumber()
	return w.value(reflect.TypeFor[AnalysisFile](), "", -1)
}

func (w *walker) fail(off int, path, format string, args ...any) error {
	l, c := lineCol(w.data, off)
	return &FileError{Line: l, Column: c, Path: path, Msg: fmt.Sprintf(format, args...)}
}

func join(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

// expected describes what a Go type takes in JSON.
func expected(t reflect.Type) string {
	switch t.Kind() {
	case reflect.Pointer:
		return expected(t.Elem())
	case reflect.String:
		return "a string"
	case reflect.Bool:
		return "true or false"
	case reflect.Float32, reflect.Float64:
		return "a number"
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return "a whole number"
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		return "a whole number, 0 or more"
	case reflect.Struct, reflect.Map:
		return "an object {...}"
	case reflect.Slice:
		return "a list [...]"
	case reflect.Array:
		return fmt.Sprintf("a list of %d values", t.Len())
	}
	return "a value"
}

func found(tok json.Token) string {
	switch x := tok.(type) {
	case nil:
		return "null"
	case string:
		return fmt.Sprintf("a string (%q)", x)
	case json.Number:
		return "a number (" + string(x) + ")"
	case bool:
		return fmt.Sprintf("%v", x)
	case json.Delim:
		if x == '{' {
			return "an object"
		}
		return "a list"
	}
	return fmt.Sprintf("%v", tok)
}

// fields lists a struct's JSON members, embedded structs' promoted.
func fields(t reflect.Type) map[string]reflect.Type {
	out := map[string]reflect.Type{}
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		tag := f.Tag.Get("json")
		name, _, _ := strings.Cut(tag, ",")
		if tag == "-" {
			continue
		}
		if f.Anonymous && name == "" && f.Type.Kind() == reflect.Struct {
			for k, v := range fields(f.Type) {
				out[k] = v
			}
			continue
		}
		if !f.IsExported() {
			continue
		}
		if name == "" {
			name = f.Name
		}
		out[name] = f.Type
	}
	return out
}

func keyList(m map[string]reflect.Type) string {
	var ks []string
	for k := range m {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	return strings.Join(ks, ", ")
}

// value checks the next value against t. index is the analyses index when
// inside analyses[i], else -1.
func (w *walker) value(t reflect.Type, path string, index int) error {
	off := skipSpace(w.data, int(w.dec.InputOffset()))
	tok, err := w.dec.Token()
	if err != nil {
		return w.fail(off, path, "damaged JSON: %v", err)
	}
	w.pos[path] = off
	name := path
	if name == "" {
		name = "the file"
	}
	mismatch := func() error {
		return w.fail(off, path, "expected %s for %s, found %s", expected(t), name, found(tok))
	}
	if t.Kind() == reflect.Interface { // analyses[i].settings
		st := w.settings[index]
		if st == nil {
			return w.skip(tok)
		}
		t = st
	}
	if tok == nil {
		switch t.Kind() {
		case reflect.Pointer, reflect.Slice, reflect.Map:
			return nil
		}
		return mismatch()
	}
	if t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	switch t.Kind() {
	case reflect.Struct:
		if tok != json.Delim('{') {
			return mismatch()
		}
		fs := fields(t)
		seen := map[string]bool{}
		for w.dec.More() {
			koff := skipSpace(w.data, int(w.dec.InputOffset()))
			kt, err := w.dec.Token()
			if err != nil {
				return w.fail(koff, path, "damaged JSON: %v", err)
			}
			k := kt.(string)
			ft, ok := fs[k]
			if !ok {
				what := name
				if index >= 0 && strings.HasSuffix(path, ".settings") {
					what = fmt.Sprintf("%s (the settings of a %s analysis)", path, kindName(t))
				}
				return w.fail(koff, join(path, k), "unknown field %q in %s: expected one of %s", k, what, keyList(fs))
			}
			if seen[k] {
				return w.fail(koff, join(path, k), "field %q is given twice in %s", k, name)
			}
			seen[k] = true
			idx := index
			if err := w.value(ft, join(path, k), idx); err != nil {
				return err
			}
		}
		_, err := w.dec.Token()
		return err
	case reflect.Map:
		if tok != json.Delim('{') {
			return mismatch()
		}
		for w.dec.More() {
			kt, err := w.dec.Token()
			if err != nil {
				return w.fail(off, path, "damaged JSON: %v", err)
			}
			if err := w.value(t.Elem(), join(path, kt.(string)), index); err != nil {
				return err
			}
		}
		_, err := w.dec.Token()
		return err
	case reflect.Slice, reflect.Array:
		if tok != json.Delim('[') {
			return mismatch()
		}
		n := 0
		for w.dec.More() {
			if t.Kind() == reflect.Array && n == t.Len() {
				return w.fail(skipSpace(w.data, int(w.dec.InputOffset())), path, "expected %s for %s, found more", expected(t), name)
			}
			idx := index
			if path == "analyses" {
				idx = n
			}
			if err := w.value(t.Elem(), fmt.Sprintf("%s[%d]", path, n), idx); err != nil {
				return err
			}
			n++
		}
		if t.Kind() == reflect.Array && n != t.Len() {
			return w.fail(off, path, "expected %s for %s, found %d", expected(t), name, n)
		}
		_, err := w.dec.Token()
		return err
	case reflect.String:
		if _, ok := tok.(string); !ok {
			return mismatch()
		}
	case reflect.Bool:
		if _, ok := tok.(bool); !ok {
			return mismatch()
		}
	case reflect.Float32, reflect.Float64, reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		n, ok := tok.(json.Number)
		if !ok {
			return mismatch()
		}
		v := reflect.New(t)
		if err := json.Unmarshal([]byte(n), v.Interface()); err != nil {
			return w.fail(off, path, "expected %s for %s, found %s (out of range or not whole)", expected(t), name, found(tok))
		}
	default:
		return w.skip(tok)
	}
	return nil
}

// skip consumes the rest of a value whose first token was read.
func (w *walker) skip(tok json.Token) error {
	if d, ok := tok.(json.Delim); ok && (d == '{' || d == '[') {
		depth := 1
		for depth > 0 {
			t, err := w.dec.Token()
			if err != nil {
				return err
			}
			if d, ok := t.(json.Delim); ok {
				if d == '{' || d == '[' {
					depth++
				} else {
					depth--
				}
			}
		}
	}
	return nil
}

func kindName(t reflect.Type) string {
	for _, k := range Kinds {
		if kindTypes[k] == t {
			return k
		}
	}
	return t.Name()
}
