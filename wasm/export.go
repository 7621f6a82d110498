//go:build js && wasm

package main

import "syscall/js"

// Save offers data as a download: a Blob, an object URL and a click on a
// temporary link (the URL is a blob: URL of this page, so nothing leaves it).
func (browserHost) Save(name, mime string, data []byte) {
	arr := js.Global().Get("Uint8Array").New(len(data))
	js.CopyBytesToJS(arr, data)
	blob := js.Global().Get("Blob").New([]any{arr}, map[string]any{"type": mime})
	url := js.Global().Get("URL").Call("createObjectURL", blob)
	doc := js.Global().Get("document")
	a := doc.Call("createElement", "a")
	a.Set("href", url)
	a.Set("download", name)
	a.Get("style").Set("display", "none")
	doc.Get("body").Call("appendChild", a)
	a.Call("click")
	a.Call("remove")
	// revoke later: the download has started by then
	var revoke js.Func
	revoke = js.FuncOf(func(js.Value, []js.Value) any {
		js.Global().Get("URL").Call("revokeObjectURL", url)
		revoke.Release()
		return nil
	})
	js.Global().Call("setTimeout", revoke, 10000)
}

// Copy puts text on the clipboard (navigator.clipboard when the page may use
// it, else a hidden text area and the copy command). The text is also kept
// in document.body.dataset.copied for tests.
func (browserHost) Copy(text string) {
	doc := js.Global().Get("document")
	doc.Get("body").Get("dataset").Set("copied", text)
	if cb := js.Global().Get("navigator").Get("clipboard"); cb.Truthy() && cb.Get("writeText").Truthy() {
		p := cb.Call("writeText", text)
		// a refused clipboard (no focus, no permission) is not an error of
		// the analysis: swallow the rejection
		p.Call("catch", js.FuncOf(func(js.Value, []js.Value) any { return nil }))
		return
	}
	ta := doc.Call("createElement", "textarea")
	ta.Set("value", text)
	doc.Get("body").Call("appendChild", ta)
	ta.Call("select")
	doc.Call("execCommand", "copy")
	ta.Call("remove")
}

// Yield blocks the calling goroutine until a zero-delay browser timer fires.
// The timer can only fire once Go has gone idle and handed control back to
// the browser, so the page draws and takes clicks in between.
func (browserHost) Yield() {
	ch := make(chan struct{})
	var f js.Func
	f = js.FuncOf(func(js.Value, []js.Value) any {
		close(ch)
		f.Release()
		return nil
	})
	js.Global().Call("setTimeout", f, 0)
	<-ch
}
