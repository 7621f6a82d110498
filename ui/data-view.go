package ui

import (
	"strconv"
	"strings"

	"github.com/vugu/vugu"

	"heatledger/core/analysis"
)

// DataView is the Data view: load files (pick, drop, paste, demo), list
// their series, draw the ticked ones, show the first rows of a file.
type DataView struct {
	WS *Workspace

	// The paste box. Its fields report their text on "change" (which fires
	// when they lose focus, so before the Read button's click): one render
	// per edit rather than per keystroke. Their values are not bound back
	// (.value), so a render caused by something else (a file arriving)
	// never overwrites what is being typed. Opening the box makes new, empty
	// fields, so opening also empties the state. (Not a <details> element:
	// vugu removes attributes it did not set, so the browser's "open" would
	// be dropped by the next render.)
	pasteOpen bool
	pasteName string
	pasteText string
	pasteNote string

	// the reading-options form, open for one file at a time
	readID   int
	readForm analysis.ReadingForm
	readNote string
}

// defaultPasteName names pasted text when the name field is empty.
const defaultPasteName = "pasted.csv"

func (c *DataView) onPick(ev vugu.DOMEvent) {
	c.WS.Do("reading the chosen files", func() {
		input := ev.JSEventTarget()
		c.WS.ReadFiles(ev.EventEnv(), input.Get("files"))
		// empty the input, so that choosing the same file again (after
		// editing it) is a change again
		input.Set("value", "")
	})
}

func (c *DataView) onPasteToggle() {
	c.WS.Do("opening the paste box", func() {
		c.pasteOpen = !c.pasteOpen
		c.pasteName, c.pasteText, c.pasteNote = "", "", ""
	})
}

func (c *DataView) pasteExpanded() string {
	if c.pasteOpen {
		return "true"
	}
	return "false"
}

func (c *DataView) onPasteName(ev vugu.DOMEvent) {
	c.WS.Do("taking the name", func() { c.pasteName = ev.PropString("target", "value") })
}

func (c *DataView) onPasteText(ev vugu.DOMEvent) {
	c.WS.Do("taking the pasted text", func() { c.pasteText = ev.PropString("target", "value") })
}

func (c *DataView) onPaste() {
	c.WS.Do("reading the pasted text", func() {
		name := strings.TrimSpace(c.pasteName)
		if name == "" {
			name = defaultPasteName
		}
		if strings.TrimSpace(c.pasteText) == "" {
			c.pasteNote = "The paste box is empty: paste a table into it first."
			return
		}
		c.pasteNote = ""
		f := c.WS.Add(name, []byte(c.pasteText))
		if f.Result != nil {
			c.WS.PreviewID = f.ID
		}
	})
}

func (c *DataView) onDemo() { c.WS.Do("loading the demo world", c.WS.LoadDemo) }

func (c *DataView) onClear() {
	c.WS.Do("clearing the files", func() {
		c.WS.Clear()
		c.pasteNote = ""
	})
}

// onReadOptions opens (or closes) the reading-options form of a file,
// filled with the options it was read with.
func (c *DataView) onReadOptions(id int) {
	c.WS.Do("opening the reading options", func() {
		c.readNote = ""
		if c.readID == id {
			c.readID = 0
			return
		}
		c.readID = id
		for _, f := range c.WS.Files {
			if f.ID == id {
				c.readForm = f.Reading
			}
		}
	})
}

func (c *DataView) readOpen(f *File) bool { return f.Data != nil && c.readID == f.ID }

func (c *DataView) readPressed(f *File) string {
	if c.readOpen(f) {
		return "true"
	}
	return "false"
}

func (c *DataView) onReadField(field *string) func(vugu.DOMEvent) {
	return func(ev vugu.DOMEvent) {
		c.WS.Do("changing a reading option", func() { *field = ev.PropString("target", "value") })
	}
}

func (c *DataView) onReadDelim(ev vugu.DOMEvent)   { c.onReadField(&c.readForm.Delimiter)(ev) }
func (c *DataView) onReadMissing(ev vugu.DOMEvent) { c.onReadField(&c.readForm.Missing)(ev) }
func (c *DataView) onReadScale(ev vugu.DOMEvent)   { c.onReadField(&c.readForm.Scale)(ev) }
func (c *DataView) onReadDates(ev vugu.DOMEvent)   { c.onReadField(&c.readForm.DateOrder)(ev) }

// onReread reads the file again with the form's options; a form error is
// shown beside the form.
func (c *DataView) onReread() {
	c.WS.Do("reading the file again", func() {
		if err := c.WS.Reread(c.readID, c.readForm); err != nil {
			c.readNote = err.Error()
			return
		}
		c.readNote = "Read again with these options."
	})
}

var delimOptions = []Option{{"", "detect"}, {"comma", "comma"}, {"semicolon", "semicolon"}, {"tab", "tab"}, {"space", "runs of spaces"}}

var dateOrderOptions = []Option{{"", "refuse D/M/Y-style dates"}, {"dmy", "day/month/year"}, {"mdy", "month/day/year"}}

func (c *DataView) onRemove(id int) {
	c.WS.Do("removing a file", func() { c.WS.Remove(id) })
}

func (c *DataView) onToggle(key string) {
	c.WS.Do("changing the drawn series", func() { c.WS.Toggle(key) })
}

func (c *DataView) onRole(ref string, ev vugu.DOMEvent) {
	c.WS.Do("giving a series its role", func() { c.WS.SetRole(ref, ev.PropString("target", "value")) })
}

func (c *DataView) roles() []Option { return roleOptions }

func (c *DataView) onPreview(id int) {
	c.WS.Do("showing a file's rows", func() { c.WS.PreviewID = id })
}

func (c *DataView) fileClass(f *File) string {
	switch {
	case f.Err != nil:
		return "hl-file hl-file-bad"
	case f.Demo:
		return "hl-file hl-file-demo"
	}
	return "hl-file"
}

func (c *DataView) previewPressed(f *File) string {
	if p := c.WS.PreviewFile(); p != nil && p.ID == f.ID {
		return "true"
	}
	return "false"
}

func (c *DataView) pendingText() string {
	if c.WS.Pending == 1 {
		return "Reading 1 file…"
	}
	return "Reading " + strconv.Itoa(c.WS.Pending) + " files…"
}

// chartMarkup is the only raw markup on the page: SVG text from core/chart,
// which escapes every piece of text (series names, units, labels) it puts
// in. Nothing else may be passed to vg-content as vugu.HTML.
func (c *DataView) chartMarkup() vugu.HTML { return vugu.HTML(c.WS.ChartSVG()) }

func (c *DataView) chartCaption() string {
	n := c.WS.ChartLines()
	return plural(n, "series", "series") + " drawn. Untick a series to hide it; gaps are missing values."
}

func (c *DataView) previewTitle() string {
	f := c.WS.PreviewFile()
	if f == nil {
		return ""
	}
	n := len(f.Result.Preview)
	return "First " + plural(n, "row", "rows") + " of " + f.Name
}
