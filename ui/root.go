package ui

import "github.com/vugu/vugu"

// View is one entry of the view switcher. Only views listed by Views appear
// there, so a view that does not work yet is never shown; adding a view is
// one entry.
type View struct {
	ID    string // short name, used in element ids
	Title string // switcher label
	Hint  string // tooltip
	// Make builds the view's component for a workspace.
	Make func(ws *Workspace) vugu.Builder
}

// Views lists the views in switcher order.
func Views() []View {
	return []View{
		{ID: "data", Title: "Data", Hint: "Load files, see their series, draw them",
			Make: func(ws *Workspace) vugu.Builder { return &DataView{WS: ws} }},
		{ID: "trends", Title: "Trends", Hint: "Trend over a window with honest uncertainty, two-window comparison, trend grid, change points",
			Make: func(ws *Workspace) vugu.Builder { return &TrendsView{WS: ws} }},
		{ID: "drivers", Title: "Drivers", Hint: "Remove short-term factors by lagged regression: each factor's contribution and the adjusted series",
			Make: func(ws *Workspace) vugu.Builder { return &DriversView{WS: ws} }},
		{ID: "response", Title: "Response", Hint: "Forcing from its components, energy balance models run and fitted to the record, and how much of the change each forcing explains",
			Make: func(ws *Workspace) vugu.Builder { return &ResponseView{WS: ws} }},
		{ID: "budget", Title: "Budget", Hint: "Heat content to heating rate, energy-budget climate sensitivity with its uncertainty, and how the chosen periods move it",
			Make: func(ws *Workspace) vugu.Builder { return &BudgetView{WS: ws} }},
		{ID: "brief", Title: "Brief", Hint: "The figures and tables you picked, with methods, results, caveats and references written out; export, print, save and open the analysis file",
			Make: func(ws *Workspace) vugu.Builder { return &BriefView{WS: ws} }},
	}
}

// Root is the page: header, view switcher, error banner and the current view.
type Root struct {
	WS *Workspace

	current string
	inst    map[string]vugu.Builder
	gen     int // the workspace Generation the views were made for
}

func (c *Root) views() []View { return Views() }

// Current is the ID of the view shown.
func (c *Root) Current() string {
	vs := Views()
	for _, v := range vs {
		if v.ID == c.current {
			return v.ID
		}
	}
	if len(vs) == 0 {
		return ""
	}
	return vs[0].ID
}

// view returns the component of the current view, made once per view so
// that its state lives while the user switches away and back.
func (c *Root) view() vugu.Builder {
	id := c.Current()
	if c.gen != c.WS.Generation {
		c.inst, c.gen = nil, c.WS.Generation
	}
	if b, ok := c.inst[id]; ok {
		return b
	}
	for _, v := range Views() {
		if v.ID == id {
			if c.inst == nil {
				c.inst = map[string]vugu.Builder{}
			}
			b := v.Make(c.WS)
			c.inst[id] = b
			c.WS.RegisterView(id, b)
			return b
		}
	}
	return nil
}

func (c *Root) tabClass(id string) string {
	if id == c.Current() {
		return "hl-tab hl-tab-on"
	}
	return "hl-tab"
}

func (c *Root) ariaCurrent(id string) any {
	if id == c.Current() {
		return "page"
	}
	return nil
}

func (c *Root) show(id string) {
	c.WS.Do("switching views", func() { c.current = id })
}

func (c *Root) dismiss() {
	c.WS.Do("dismissing the message", c.WS.DismissBanner)
}

func (c *Root) undoOpen() {
	c.WS.Do("going back to the previous work", func() {
		if err := c.WS.UndoOpen(); err != nil {
			panic(err)
		}
	})
}

func (c *Root) keepOpened() {
	c.WS.Do("keeping the opened file", func() { c.WS.Undo, c.WS.UndoName = nil, "" })
}
