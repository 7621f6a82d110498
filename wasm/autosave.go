//go:build js && wasm

package main

// Autosave: the workspace (its analysis file: data, settings, brief) is
// kept in this browser's IndexedDB through window.heatledgerStore
// (static/loader.js) and brought back when the page opens again.

import (
	"fmt"
	"syscall/js"
	"time"

	"github.com/vugu/vugu"

	"heatledger/ui"
)

// savedName names the autosaved workspace in messages.
const savedName = "the workspace kept in this browser"

func store() (js.Value, bool) {
	s := js.Global().Get("heatledgerStore")
	return s, s.Type() == js.TypeObject
}

// restoreSaved opens the autosaved workspace, if there is one. It reports
// whether it did; a damaged copy is dropped with a note in the banner.
func restoreSaved(ws *ui.Workspace) bool {
	s, ok := store()
	if !ok {
		return false
	}
	p := js.Global().Get("heatledgerSaved") // started by loader.js
	if p.Type() != js.TypeObject {
		p = s.Call("get")
	}
	v, err := await(p)
	if err != nil {
		fmt.Println("heatledger: no autosaved workspace:", err)
		return false
	}
	if v.Type() != js.TypeString || v.String() == "" {
		return false
	}
	restored := false
	ws.Do("restoring "+savedName, func() {
		if err := ws.OpenAnalysis("autosave", []byte(v.String())); err != nil {
			// keep the unreadable copy under another key before autosave
			// writes over "current"
			go await(s.Call("aside", v))
			ws.Banner = append(ws.Banner, "The workspace kept in this browser could not be read and was set aside ("+err.Error()+"); the demo world is shown instead.")
			return
		}
		ws.Undo, ws.UndoName = nil, ""
		restored = true
	})
	return restored
}

// autosave writes the workspace to the store whenever it has changed,
// at most once a second. It runs for the life of the page.
func autosave(env vugu.EventEnv, ws *ui.Workspace) {
	s, ok := store()
	if !ok {
		return
	}
	saved := -1
	for {
		time.Sleep(time.Second)
		env.Lock()
		if ws.Version == saved {
			env.UnlockOnly()
			continue
		}
		var data []byte
		var err error
		func() {
			defer func() {
				if p := recover(); p != nil {
					err = fmt.Errorf("%v", p)
				}
			}()
			data, err = ws.SaveBytes()
		}()
		version := ws.Version // what SaveBytes itself changed is saved too
		env.UnlockOnly()
		if err != nil {
			fmt.Println("heatledger: autosave skipped:", err)
			continue
		}
		if _, err := await(s.Call("put", string(data))); err != nil {
			// not marked saved: the next tick tries again
			fmt.Println("heatledger: autosave failed:", err)
			continue
		}
		saved = version
		js.Global().Get("document").Get("body").Get("dataset").Set("saved", fmt.Sprint(saved))
		// a large workspace is written less often: about a second more
		// per 5 MB, so big files do not keep the page busy
		time.Sleep(time.Duration(len(data)/(5<<20)) * time.Second)
	}
}

// ClearSaved forgets the autosaved workspace (ui.SavedClearer).
func (browserHost) ClearSaved() {
	if s, ok := store(); ok {
		go await(s.Call("clear"))
	}
}

// Print opens the browser's print dialog once the click has been handled
// (ui.Printer).
func (browserHost) Print() {
	var f js.Func
	f = js.FuncOf(func(js.Value, []js.Value) any {
		f.Release()
		js.Global().Call("print")
		return nil
	})
	js.Global().Call("setTimeout", f, 0)
}
