//go:build js && wasm

// Command wasm is Heatledger's browser program (GOOS=js GOARCH=wasm). It
// mounts the ui root component on #hl-app, reads the files the user picks or
// drops, loads the demo world on start, and runs vugu's render loop.
//
// When the first chart has been drawn it marks the document:
// document.body.dataset.ready = "1" and dataset.readyMs = the time since
// navigation start in milliseconds, so tests and the bench can wait for it.
//
// It also sets window.heatledger (the JavaScript API) and, on
// static/embed.html, draws one figure instead of the page: see api.go.
package main

import (
	"errors"
	"fmt"
	"runtime/debug"
	"strconv"
	"syscall/js"

	"github.com/vugu/vugu"
	"github.com/vugu/vugu/domrender"
	vjs "github.com/vugu/vugu/js"

	"heatledger/core/series"
	"heatledger/ui"
)

// mountPoint is the element of static/index.html the page is drawn into.
const mountPoint = "#hl-app"

func main() {
	mark("hl-go-start")
	registerAPI() // window.heatledger, before the first render (wasm/api.go)
	if req, ok := embedRequest(); ok {
		// embed.html: one figure, read-only, no ui; stay alive for the API
		runEmbed(req)
		select {}
	}
	doc := js.Global().Get("document")
	renderer, err := domrender.New(mountPoint)
	if err != nil {
		fatal("could not start the renderer: " + err.Error())
		return
	}
	defer renderer.Release()

	env := renderer.EventEnv()
	buildEnv, err := vugu.NewBuildEnv(env)
	if err != nil {
		fatal("could not start the renderer: " + err.Error())
		return
	}

	ws := ui.NewWorkspace(browserHost{})
	ws.Env = env
	if !restoreSaved(ws) {
		ws.Do("loading the demo world", ws.LoadDemo)
	}
	mark("hl-demo-read")
	root := &ui.Root{WS: ws}
	listenForDrops(doc, env, ws)
	go autosave(env, ws)

	marked := false
	for {
		renderOnce(buildEnv, renderer, root, ws)
		if !marked && ws.ChartLines() > 0 {
			marked = true
			mark("hl-chart-drawn")
			body := doc.Get("body")
			body.Get("dataset").Set("readyMs", strconv.FormatFloat(js.Global().Get("performance").Call("now").Float(), 'f', 1, 64))
			body.Get("dataset").Set("ready", "1")
		}
		if !renderer.EventWait() {
			if !js.Global().Truthy() {
				return
			}
			// EventWait says false when an event handler panicked past
			// vugu; ui.Workspace.Do catches those, so this is a last resort.
			ws.Fail("handling an event", errors.New("an event handler stopped unexpectedly"))
		}
	}
}

// mark sets a performance mark (seen in the browser's performance tools and
// read by the load-time bench).
func mark(name string) {
	if p := js.Global().Get("performance"); p.Truthy() && p.Get("mark").Truthy() {
		p.Call("mark", name)
	}
}

// renderOnce builds and renders the page. A panic while building is shown
// in the banner and the page is built once more; if that fails too the
// error is written into the page as plain text.
func renderOnce(buildEnv *vugu.BuildEnv, r *domrender.JSRenderer, root *ui.Root, ws *ui.Workspace) {
	for attempt := 0; attempt < 2; attempt++ {
		err := func() (err error) {
			defer func() {
				if p := recover(); p != nil {
					fmt.Printf("heatledger: panic while drawing the page: %v\n%s", p, debug.Stack())
					err = fmt.Errorf("%v", p)
				}
			}()
			return r.Render(buildEnv.RunBuild(root))
		}()
		if err == nil {
			return
		}
		if attempt == 0 {
			ws.Fail("drawing the page", err)
			continue
		}
		fatal("the page could not be drawn: " + err.Error() + ". Reload the page to start again.")
	}
}

// fatal shows a message in place of the page, as text.
func fatal(msg string) {
	fmt.Println("heatledger:", msg)
	doc := js.Global().Get("document")
	el := doc.Call("querySelector", mountPoint)
	if el.IsNull() || el.IsUndefined() {
		el = doc.Get("body")
	}
	p := doc.Call("createElement", "p")
	p.Set("className", "hl-fatal")
	p.Set("textContent", "Heatledger stopped: "+msg)
	el.Call("replaceChildren", p)
}

// browserHost reads files with Blob.arrayBuffer.
type browserHost struct{}

// ReadFiles implements ui.Host.
func (browserHost) ReadFiles(list vjs.Value, done func(name string, data []byte, err error)) int {
	l := js.Value(list)
	if l.IsUndefined() || l.IsNull() {
		return 0
	}
	n := l.Length()
	files := make([]js.Value, 0, n)
	for i := 0; i < n; i++ {
		files = append(files, l.Index(i))
	}
	go func() {
		for _, f := range files {
			name, data, err := readFile(f)
			done(name, data, err)
		}
	}()
	return len(files)
}

// readFile reads one File object; it runs on its own goroutine, never in a
// JS callback, because it waits for a promise.
func readFile(f js.Value) (name string, data []byte, err error) {
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("%s: the browser could not read the file: %v", name, p)
		}
	}()
	name = f.Get("name").String()
	limit := series.DefaultMaxBytes
	if size := f.Get("size").Float(); size > float64(limit) {
		// refuse before reading, with the reader's own error form
		return name, nil, &series.Error{File: name, Line: 1, Column: 1,
			Msg: fmt.Sprintf("file is %.1f MiB, over the size limit of %d MiB", size/(1<<20), limit>>20)}
	}
	buf, err := await(f.Call("arrayBuffer"))
	if err != nil {
		return name, nil, fmt.Errorf("%s: the browser could not read the file: %w", name, err)
	}
	u8 := js.Global().Get("Uint8Array").New(buf)
	data = make([]byte, u8.Get("byteLength").Int())
	js.CopyBytesToGo(data, u8)
	return name, data, nil
}

// await waits for a JS promise. Call it only from a goroutine of its own.
func await(p js.Value) (js.Value, error) {
	type result struct {
		v   js.Value
		err error
	}
	ch := make(chan result, 1)
	ok := js.FuncOf(func(_ js.Value, args []js.Value) any {
		v := js.Undefined()
		if len(args) > 0 {
			v = args[0]
		}
		ch <- result{v: v}
		return nil
	})
	fail := js.FuncOf(func(_ js.Value, args []js.Value) any {
		msg := "unknown error"
		if len(args) > 0 {
			msg = args[0].Call("toString").String()
		}
		ch <- result{err: errors.New(msg)}
		return nil
	})
	defer ok.Release()
	defer fail.Release()
	p.Call("then", ok, fail)
	r := <-ch
	return r.v, r.err
}

// listenForDrops makes the whole page a drop target: files dropped anywhere
// are read (and the browser does not navigate away to show them). While
// files are dragged over the page, body carries the class "hl-dragging".
// These listeners live outside vugu so that the many dragover events do not
// each re-render the page.
func listenForDrops(doc js.Value, env vugu.EventEnv, ws *ui.Workspace) {
	body := doc.Get("body")
	hasFiles := func(ev js.Value) bool {
		dt := ev.Get("dataTransfer")
		if dt.IsNull() || dt.IsUndefined() {
			return false
		}
		types := dt.Get("types")
		for i := 0; i < types.Length(); i++ {
			if types.Index(i).String() == "Files" {
				return true
			}
		}
		return false
	}
	over := js.FuncOf(func(_ js.Value, args []js.Value) any {
		ev := args[0]
		if hasFiles(ev) {
			ev.Call("preventDefault")
			ev.Get("dataTransfer").Set("dropEffect", "copy")
			body.Get("classList").Call("add", "hl-dragging")
		}
		return nil
	})
	leave := js.FuncOf(func(_ js.Value, args []js.Value) any {
		ev := args[0]
		// relatedTarget is null when the pointer leaves the window
		if rt := ev.Get("relatedTarget"); rt.IsNull() || rt.IsUndefined() {
			body.Get("classList").Call("remove", "hl-dragging")
		}
		return nil
	})
	drop := js.FuncOf(func(_ js.Value, args []js.Value) any {
		ev := args[0]
		body.Get("classList").Call("remove", "hl-dragging")
		if !hasFiles(ev) {
			return nil
		}
		ev.Call("preventDefault")
		// copy the list now: the drop's data is only readable during the event
		files := js.Global().Get("Array").Call("from", ev.Get("dataTransfer").Get("files"))
		// the handler runs on the JS event loop: take the lock elsewhere
		go func() {
			env.Lock()
			defer env.UnlockRender()
			ws.Do("reading the dropped files", func() { ws.ReadFiles(env, vjs.Value(files)) })
		}()
		return nil
	})
	doc.Call("addEventListener", "dragenter", over)
	doc.Call("addEventListener", "dragover", over)
	doc.Call("addEventListener", "dragleave", leave)
	doc.Call("addEventListener", "drop", drop)
}
