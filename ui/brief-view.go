package ui

import (
	"context"
	"encoding/json"
	"fmt"
	"strconv"
	"strings"

	"github.com/vugu/vugu"

	"heatledger/core/analysis"
	"heatledger/core/brief"
)

// BriefView is the Brief view: the figures and tables picked in the other
// views, the methods and results text core/brief writes for them, the
// caveats and references; exports (HTML, Markdown with SVG files, print);
// saving and opening the analysis file; starting afresh.
type BriefView struct {
	WS *Workspace

	sig     string
	b       *brief.Brief
	err     string
	note    string
	confirm bool // "start fresh" asked once, waiting for the second click
	cache   map[string]briefRun
	// building is the signature of the brief being written in the
	// background ("" when none); progress says how far it is.
	building, progress string
	cancel             context.CancelFunc
}

// Printer is a Host that can open the browser's print dialog.
type Printer interface{ Print() }

// SavedClearer is a Host that keeps an autosaved workspace and can forget it.
type SavedClearer interface{ ClearSaved() }

// BriefFile is the part of the workspace's analysis file the briefing
// reads: the data files, the briefing's analyses and its items.
func (w *Workspace) BriefFile() (*analysis.AnalysisFile, error) {
	f := analysis.NewAnalysisFile()
	var err error
	if f.Files, err = w.dataFiles(); err != nil {
		return nil, err
	}
	f.Analyses = append(f.Analyses, w.Brief.Analyses...)
	f.Brief = &analysis.BriefSpec{Title: w.Brief.Title, Items: append([]analysis.BriefItem{}, w.Brief.Items...)}
	return f, nil
}

// current builds the briefing when its items, analyses, title or data
// changed since the last build. Each analysis is run once per settings and
// data: moving an item or retitling the brief reuses the runs.
func (c *BriefView) current() *brief.Brief {
	// the signature (checked at every render, so it copies no file text):
	// the brief's analyses, title and items, and the data's identity (a
	// file read again, with other options or new bytes, gets a new result)
	var data strings.Builder
	for _, fl := range c.WS.Files {
		fmt.Fprintf(&data, "%s\x00%d\x00%p\x00", fl.Name, len(fl.Data), fl.Result)
	}
	raw, _ := json.Marshal(struct {
		A []analysis.Analysis
		T string
		I []analysis.BriefItem
	}{c.WS.Brief.Analyses, c.WS.Brief.Title, c.WS.Brief.Items})
	sig := string(raw) + data.String()
	if sig == c.sig && c.b != nil {
		c.stopBuild() // back to the brief shown: a build for another state is moot
		return c.b
	}
	if sig == c.building {
		return c.b // being written (the old text shows meanwhile)
	}
	f, err := c.WS.BriefFile()
	if err != nil {
		c.err, c.b = err.Error(), nil
		return nil
	}
	// the series as the page read them: the same bytes and reading options
	// the saved file holds, so heatledger run reads the same values
	w := c.WS.Analysis()
	keys := map[string]string{}
	shown := map[string]*analysis.Shown{}
	failed := map[string]string{}
	for _, a := range f.Analyses {
		js, _ := json.Marshal(a)
		keys[a.ID] = string(js) + data.String()
		if old, ok := c.cache[a.ID]; ok && old.key == keys[a.ID] {
			if old.err != "" {
				failed[a.ID] = old.err
			} else {
				shown[a.ID] = old.sh
			}
		}
	}
	keep := func() {
		if c.cache == nil {
			c.cache = map[string]briefRun{}
		}
		for id, sh := range shown {
			c.cache[id] = briefRun{key: keys[id], sh: sh}
		}
		for id, e := range failed {
			if !strings.Contains(e, "context canceled") {
				c.cache[id] = briefRun{key: keys[id], err: e}
			}
		}
	}
	done := func(b *brief.Brief) {
		c.b, c.sig, c.building, c.err = b, sig, "", ""
		c.cache = nil
		keep()
	}
	env := c.WS.Env
	if env == nil || len(shown)+len(failed) == len(f.Analyses) {
		// nothing to run (or no page to hand back to): write it now
		done(brief.Build(f, w, brief.Options{Shown: shown, Failed: failed}))
		return c.b
	}
	// analyses to run: in the background, with progress, so the page stays
	// responsive (a change-point item takes seconds)
	c.stopBuild()
	ctx, cancel := context.WithCancel(context.Background())
	c.building, c.progress, c.cancel = sig, "Running the analyses of the brief…", cancel
	go func() {
		c.WS.Yield()
		progress := c.WS.Progress(env, func(d, t int) { c.progress = fmt.Sprintf("Running the analyses of the brief: %d of %d steps…", d, t) })
		var b *brief.Brief
		var crashed any
		func() {
			defer func() { crashed = recover() }()
			b = brief.Build(f, w, brief.Options{Context: ctx, Shown: shown, Failed: failed, Progress: func(_ string, d, t int) { progress(d, t) }})
		}()
		env.Lock()
		defer env.UnlockRender()
		if c.building != sig {
			keep() // the brief changed meanwhile: keep what was run for later
			return
		}
		c.cancel = nil
		if crashed != nil {
			// keep this signature, so the failing build is not retried
			// at every render; the banner says what happened
			done(&brief.Brief{Title: c.title()})
			c.err = fmt.Sprintf("The brief could not be written: %v", crashed)
			c.WS.Fail("writing the brief", crashed)
			return
		}
		done(b)
	}()
	return c.b
}

// stopBuild cancels a build under way, if any.
func (c *BriefView) stopBuild() {
	if c.cancel != nil {
		c.cancel()
		c.cancel = nil
	}
	c.building = ""
}

// progressText says what the brief is waiting for ("" when nothing).
func (c *BriefView) progressText() string {
	if c.building == "" {
		return ""
	}
	return c.progress
}

// briefRun is an analysis run for the brief, with the settings and data it
// was run on.
type briefRun struct {
	key string
	sh  *analysis.Shown
	err string // why it failed ("" when it ran)
}

func (c *BriefView) items() []brief.Item {
	if b := c.current(); b != nil {
		return b.Items
	}
	return nil
}

func (c *BriefView) hasItems() bool { return len(c.WS.Brief.Items) > 0 }

func (c *BriefView) title() string {
	if c.WS.Brief.Title != "" {
		return c.WS.Brief.Title
	}
	return brief.DefaultTitle
}

func (c *BriefView) onTitle(ev vugu.DOMEvent) {
	c.WS.Do("changing the title", func() { c.WS.Brief.Title = strings.TrimSpace(ev.PropString("target", "value")) })
}

func (c *BriefView) move(i, d int) {
	c.WS.Do("moving an item", func() { c.WS.MoveBriefItem(i, d) })
}

func (c *BriefView) remove(i int) {
	c.WS.Do("removing an item", func() { c.WS.RemoveBriefItem(i) })
}

// article is the briefing as HTML made by core/brief, which escapes every
// text (labels and file content never become markup).
func (c *BriefView) article() vugu.HTML {
	if b := c.current(); b != nil {
		return vugu.HTML(b.Fragment())
	}
	return ""
}

func (c *BriefView) itemCaption(i int, it brief.Item) string {
	what := "Table"
	if it.SVG != "" {
		what = "Figure"
	}
	if it.Err != "" {
		return strconv.Itoa(i+1) + ". " + it.Analysis + " (" + it.Part + "): cannot be shown"
	}
	return what + " " + strconv.Itoa(i+1) + ". " + it.Title
}

func (c *BriefView) stem() string {
	return fileStem(c.title())
}

// download exports the briefing as HTML or as Markdown with its figures
// (a zip holding brief.md and one SVG file per figure).
func (c *BriefView) download(what string) {
	c.WS.Do("exporting the brief", func() {
		b := c.current()
		if c.building != "" {
			c.note = "The brief is still being written: export it in a moment."
			return
		}
		if b == nil || len(b.Items) == 0 {
			c.note = "Nothing to export yet: add figures or tables from the other views."
			return
		}
		switch what {
		case "html":
			name := c.stem() + ".html"
			c.WS.Save(name, "text/html", []byte(b.HTML()))
			c.note = "Saved " + name + ": one self-contained page."
		case "md":
			md, figs := b.Markdown()
			files := []brief.ZipFile{{Name: "brief.md", Data: []byte(md)}}
			for i, it := range b.Items {
				if n := brief.FigureName(i, it); figs[n] != "" {
					files = append(files, brief.ZipFile{Name: n, Data: []byte(figs[n])})
				}
			}
			name := c.stem() + "-markdown.zip"
			c.WS.Save(name, "application/zip", brief.Zip(files))
			c.note = "Saved " + name + ": brief.md with " + plural(len(files)-1, "SVG figure", "SVG figures") + " beside it."
		}
	})
}

func (c *BriefView) print() {
	c.WS.Do("printing", func() {
		if c.current(); c.building != "" {
			c.note = "The brief is still being written: print it in a moment."
			return
		}
		p, ok := c.WS.Host.(Printer)
		if !ok {
			c.note = "This page cannot print here: use the browser's Print command."
			return
		}
		p.Print()
	})
}

// save offers the analysis file: the data, every view's settings, the
// briefing.
func (c *BriefView) save() {
	c.WS.Do("saving the analysis file", func() {
		data, err := c.WS.SaveBytes()
		if err != nil {
			c.note = "The analysis file could not be written: " + err.Error()
			return
		}
		name := c.stem() + analysis.AnalysisExt
		c.WS.Save(name, "application/json", data)
		c.note = "Saved " + name + " (" + sizeText(len(data)) + "): open it here again, or run it with heatledger run."
	})
}

// onOpen reads an analysis file picked with the file input.
func (c *BriefView) onOpen(ev vugu.DOMEvent) {
	c.WS.Do("opening an analysis file", func() {
		input := ev.JSEventTarget()
		c.WS.ReadFiles(ev.EventEnv(), input.Get("files"))
		input.Set("value", "")
		c.note = ""
	})
}

// fresh empties the workspace (and the autosaved copy) and loads the demo,
// after a second click.
func (c *BriefView) fresh() {
	c.WS.Do("starting afresh", func() {
		if !c.confirm {
			c.confirm = true
			return
		}
		c.confirm = false
		if h, ok := c.WS.Host.(SavedClearer); ok {
			h.ClearSaved()
		}
		c.WS.StartFresh()
		c.note = "Started afresh: the demo world is loaded and the brief is empty."
	})
}

func (c *BriefView) keep() { c.WS.Do("keeping the work", func() { c.confirm = false }) }

// itemLabel is an item button's accessible name (format holds one %d).
func (c *BriefView) itemLabel(i int, format string) string {
	return strings.Replace(format, "%d", strconv.Itoa(i+1), 1)
}
