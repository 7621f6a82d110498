package analysis

import (
	"fmt"
	"sort"
	"strings"

	"heatledger/core/series"
)

// Workspace is the set of files read so far; engines look series up in it
// by name.
type Workspace struct {
	Files []Loaded
	// Roles are the roles the user gave series (reference NAME or
	// FILE:NAME -> RoleTarget, RoleDriver, RoleForcing or RoleHeat). The
	// views' defaults prefer series with the role they need.
	Roles map[string]string
}

// RoleOf is the role given to a series ("" for none).
func (w *Workspace) RoleOf(s *series.Series) string {
	if r := w.Roles[ref(s)]; r != "" {
		return r
	}
	return w.Roles[s.Name]
}

// WithRole lists the references of the series given a role, in file order.
func (w *Workspace) WithRole(role string) []string {
	var out []string
	for _, s := range w.All() {
		if w.RoleOf(s) == role {
			out = append(out, ref(s))
		}
	}
	return out
}

// firstWithRole is the first series given a role whose unit suits the
// use (ok), or "" for none.
func (w *Workspace) firstWithRole(role string, ok func(*series.Series) bool) string {
	for _, s := range w.All() {
		if w.RoleOf(s) == role && ok(s) {
			return ref(s)
		}
	}
	return ""
}

// roleForcing lists the series given the forcing role as components, the
// kind guessed from name and unit (ForcingKindGuess); a series whose kind
// cannot be told is taken as a forcing already in W m-2 only when its unit
// says so, and left out otherwise.
func (w *Workspace) roleForcing() []ForcingComponent {
	var out []ForcingComponent
	for _, s := range w.All() {
		if w.RoleOf(s) != RoleForcing {
			continue
		}
		k := ForcingKindGuess(s.Name, s.Unit)
		if k == "" && isFluxUnit(s.Unit) {
			k = "erf"
		}
		if k != "" {
			out = append(out, ForcingComponent{Series: ref(s), Name: s.Name, Kind: k})
		}
	}
	return out
}

// NewWorkspace reads the files into a workspace. Files that fail to read
// stay in it with their error.
func NewWorkspace(files []File, opt series.Options) *Workspace {
	return &Workspace{Files: Load(files, opt)}
}

// All returns every series read, in file order.
func (w *Workspace) All() []*series.Series {
	var out []*series.Series
	for _, l := range w.Files {
		if l.Result != nil {
			out = append(out, l.Result.Series...)
		}
	}
	return out
}

// Find looks a series up by name, or by "FILE:NAME" when two files hold a
// series of the same name. The error lists what is there.
func (w *Workspace) Find(ref string) (*series.Series, error) {
	var hits []*series.Series
	all := w.All()
	for _, s := range all {
		if s.Name == ref || s.Source+":"+s.Name == ref {
			hits = append(hits, s)
		}
	}
	if len(hits) == 0 {
		// a file's base name also works as the file part
		for _, s := range all {
			if i := strings.LastIndex(ref, ":"); i > 0 && s.Name == ref[i+1:] && baseName(s.Source) == ref[:i] {
				hits = append(hits, s)
			}
		}
	}
	switch len(hits) {
	case 1:
		return hits[0], nil
	case 0:
		var names []string
		for _, s := range all {
			names = append(names, s.Name)
		}
		sort.Strings(names)
		if len(names) == 0 {
			return nil, fmt.Errorf("no series named %q: no series were read", ref)
		}
		return nil, fmt.Errorf("no series named %q; the files hold: %s", ref, strings.Join(names, ", "))
	}
	var refs []string
	for _, s := range hits {
		refs = append(refs, s.Source+":"+s.Name)
	}
	return nil, fmt.Errorf("series name %q is in several files: say which with FILE:NAME (%s)", ref, strings.Join(refs, ", "))
}

// ref is the name Find resolves to exactly this series: "FILE:NAME", or
// NAME for a series that came from no file.
func ref(s *series.Series) string {
	if s.Source == "" {
		return s.Name
	}
	return s.Source + ":" + s.Name
}

func baseName(p string) string {
	p = strings.ReplaceAll(p, "\\", "/")
	if i := strings.LastIndex(p, "/"); i >= 0 {
		return p[i+1:]
	}
	return p
}
