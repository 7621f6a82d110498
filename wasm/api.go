//go:build js && wasm

package main

// The page's JavaScript API and its embed mode.
//
//   - window.heatledger.run(requestJSON[, name]) runs every analysis of an
//     analysis file (its JSON text, or an object, which is stringified) and
//     returns a Promise of the report's JSON text, the same bytes as
//     `heatledger run` writes. A damaged file rejects the promise with an
//     Error whose message is "NAME:LINE:COLUMN: what" (NAME defaults to
//     "request").
//   - Embed mode: static/embed.js sets window.heatledgerEmbed = {analysis,
//     figure, view, text} (text: a Promise of the analysis file's text)
//     before it starts main.wasm; main then draws that one figure into
//     #hl-embed instead of mounting the full page.

import (
	"errors"
	"fmt"
	"path"
	"runtime/debug"
	"syscall/js"

	"heatledger/core/analysis"
)

// registerAPI sets window.heatledger. The function value is never
// released: the API lives as long as the program.
func registerAPI() {
	run := js.FuncOf(func(_ js.Value, args []js.Value) any {
		var req, name string
		var argErr error
		switch {
		case len(args) == 0 || args[0].IsUndefined() || args[0].IsNull():
			argErr = errors.New("heatledger.run: expected the analysis file's JSON text as the first argument")
		case args[0].Type() == js.TypeString:
			req = args[0].String()
		case args[0].Type() == js.TypeObject:
			req = js.Global().Get("JSON").Call("stringify", args[0]).String()
		default:
			argErr = fmt.Errorf("heatledger.run: expected the analysis file's JSON text, got a %s", args[0].Type())
		}
		if len(args) > 1 && args[1].Type() == js.TypeString {
			name = args[1].String()
		}
		return newPromise(func() (string, error) {
			if argErr != nil {
				return "", argErr
			}
			b, err := runRequest([]byte(req), name)
			return string(b), err
		})
	})
	api := js.Global().Get("Object").New()
	api.Set("run", run)
	api.Set("version", analysis.ReportVersion)
	js.Global().Set("heatledger", api)
}

// runRequest parses an analysis file, runs it and writes the report. It
// never panics: a panic becomes an error.
func runRequest(data []byte, name string) (out []byte, err error) {
	defer func() {
		if p := recover(); p != nil {
			fmt.Printf("heatledger: panic in heatledger.run: %v\n%s", p, debug.Stack())
			out, err = nil, fmt.Errorf("heatledger.run: internal error: %v", p)
		}
	}()
	f, err := parseNamed(data, name)
	if err != nil {
		return nil, err
	}
	rep, err := analysis.Run(f)
	if err != nil {
		return nil, err
	}
	return rep.Marshal()
}

// parseNamed is analysis.ParseAnalysisFile with the file's name in the
// position of an error ("request" when name is empty).
func parseNamed(data []byte, name string) (*analysis.AnalysisFile, error) {
	if name == "" {
		name = "request"
	}
	f, err := analysis.ParseAnalysisFile(data)
	var fe *analysis.FileError
	if errors.As(err, &fe) && fe.Name == "" {
		fe.Name = name
	}
	return f, err
}

// newPromise returns a JS Promise settled by work, which runs on a
// goroutine of its own (so it may block, and the caller's JS callback
// returns at once). An error rejects the promise with a JS Error.
func newPromise(work func() (string, error)) js.Value {
	var executor js.Func
	executor = js.FuncOf(func(_ js.Value, args []js.Value) any {
		resolve, reject := args[0], args[1]
		executor.Release()
		go func() {
			var (
				v   string
				err error
			)
			func() {
				defer func() {
					if p := recover(); p != nil {
						err = fmt.Errorf("heatledger: internal error: %v", p)
					}
				}()
				v, err = work()
			}()
			if err != nil {
				reject.Invoke(js.Global().Get("Error").New(err.Error()))
				return
			}
			resolve.Invoke(v)
		}()
		return nil
	})
	return js.Global().Get("Promise").New(executor)
}

// embedRequest reads window.heatledgerEmbed; ok is false when the page is
// not an embed page.
func embedRequest() (req js.Value, ok bool) {
	e := js.Global().Get("heatledgerEmbed")
	return e, e.Type() == js.TypeObject
}

// runEmbed draws the one figure the embed page asks for into #hl-embed, or
// says in the page why it cannot. It returns when done; main keeps the
// program alive for heatledger.run.
func runEmbed(req js.Value) {
	doc := js.Global().Get("document")
	box := doc.Call("getElementById", "hl-embed")
	if box.IsNull() {
		box = doc.Get("body")
	}
	str := func(key string) string {
		if v := req.Get(key); v.Type() == js.TypeString {
			return v.String()
		}
		return ""
	}
	src, id, view := str("analysis"), str("figure"), str("view")
	title, svg, err := func() (title, svg string, err error) {
		defer func() {
			if p := recover(); p != nil {
				fmt.Printf("heatledger: panic while drawing the embedded figure: %v\n%s", p, debug.Stack())
				err = fmt.Errorf("internal error: %v", p)
			}
		}()
		text, err := await(req.Get("text"))
		if err != nil {
			return "", "", err
		}
		f, err := parseNamed([]byte(text.String()), path.Base(src))
		if err != nil {
			return "", "", err
		}
		return embedFigure(f, id, view)
	}()
	if err != nil {
		p := doc.Call("createElement", "p")
		p.Set("className", "hl-fatal")
		p.Call("setAttribute", "role", "alert")
		p.Set("textContent", "Heatledger cannot draw this figure: "+err.Error())
		box.Call("replaceChildren", p)
		doc.Get("body").Get("dataset").Set("failed", "1")
		return
	}
	fig := doc.Call("createElement", "figure")
	fig.Set("className", "hl-embed-figure")
	fig.Call("setAttribute", "aria-label", title)
	fig.Get("style").Set("margin", "0")
	// the chart builders escape every label and value: the SVG text holds no
	// markup from the file
	fig.Set("innerHTML", svg)
	if el := fig.Call("querySelector", "svg"); !el.IsNull() {
		st := el.Get("style")
		st.Set("width", "100%")
		st.Set("height", "auto")
		st.Set("display", "block")
	}
	box.Call("replaceChildren", fig)
	doc.Set("title", title)
	doc.Get("body").Get("dataset").Set("ready", "1")
}

// embedFigure finds the analysis id and draws its figure: the chart's
// title (its text alternative) and SVG. view names one of the analysis'
// figures (analysis.Workspace.Show lists them); "" is the first.
func embedFigure(f *analysis.AnalysisFile, id, view string) (title, svg string, err error) {
	if id == "" {
		return "", "", errors.New("no figure given: add figure=ID (the id of one of the file's analyses) to the address")
	}
	var a *analysis.Analysis
	var ids []string
	for i := range f.Analyses {
		ids = append(ids, f.Analyses[i].ID)
		if f.Analyses[i].ID == id {
			a = &f.Analyses[i]
		}
	}
	if a == nil {
		return "", "", fmt.Errorf("the analysis file has no analysis %q: expected one of %q", id, ids)
	}
	w, err := f.Workspace()
	if err != nil {
		return "", "", err
	}
	sh, err := w.Show(*a, nil, nil)
	if err != nil {
		return "", "", err
	}
	var figs []string
	for _, p := range sh.Parts {
		if p.IsFigure() {
			figs = append(figs, p.Name)
			if view == "" || view == p.Name {
				return p.Title, p.SVG, nil
			}
		}
	}
	if len(figs) == 0 {
		return "", "", fmt.Errorf("analysis %q is of kind %s, which has no figure to embed: its numbers are in the report of heatledger.run", id, a.Kind)
	}
	return "", "", fmt.Errorf("analysis %q (%s) has no view %q (or it is empty): expected one of %q", id, a.Kind, view, figs)
}
