package brief

import (
	"encoding/binary"
	"fmt"
	"hash/crc32"
	"html"
	"strings"

	"heatledger/core/analysis"
)

// htmlStyle is the exported page's stylesheet: screen and print. Printing
// the page (to paper or PDF) keeps each figure with its caption on one
// page and drops the details toggles' markers.
const htmlStyle = `body{font-family:system-ui,sans-serif;max-width:50rem;margin:2rem auto;padding:0 1rem;color:#1b1b1b;line-height:1.5}
h1{font-size:1.6rem}h2{font-size:1.2rem;margin-top:2rem}
figure{margin:1.5rem 0}figure svg{max-width:100%;height:auto}figcaption{font-size:.9rem;color:#444}
table{border-collapse:collapse;font-size:.85rem;margin:.5rem 0}th,td{border:1px solid #bbb;padding:.2rem .4rem;text-align:left}
.hl-note{font-size:.85rem;color:#555}.hl-err{color:#a00}
@media print{body{margin:0;max-width:none;font-size:10.5pt}figure,table{break-inside:avoid}h2{break-after:avoid}details>summary{display:none}details{display:block}a{color:inherit}}`

// HTML writes the briefing as one self-contained HTML page: inline SVG
// figures, each with its numbers as a table (the text alternative), no
// script and nothing loaded from elsewhere. Every text is escaped.
func (b *Brief) HTML() string {
	e := html.EscapeString
	var s strings.Builder
	s.WriteString("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
	s.WriteString("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
	s.WriteString("<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'; img-src data:\">\n")
	s.WriteString("<title>" + e(b.Title) + "</title>\n<style>" + htmlStyle + "</style>\n</head>\n<body>\n")
	s.WriteString(b.Fragment())
	s.WriteString("<p class=\"hl-note\">Made with Heatledger from the analysis file saved with this briefing; every number can be reproduced with <code>heatledger run</code>.</p>\n</body>\n</html>\n")
	return s.String()
}

// Fragment is the briefing as HTML to place inside a page (the page's
// Brief view shows it): headings, paragraphs, figures with their tables,
// caveats and references. Every text is escaped.
func (b *Brief) Fragment() string {
	e := html.EscapeString
	var s strings.Builder
	s.WriteString("<h1>" + e(b.Title) + "</h1>\n")
	para := func(title string, list []string) {
		if len(list) == 0 {
			return
		}
		s.WriteString("<h2 id=\"brief-" + strings.ToLower(title) + "\">" + e(title) + "</h2>\n")
		for _, p := range list {
			s.WriteString("<p>" + e(p) + "</p>\n")
		}
	}
	if len(b.Data) > 0 {
		s.WriteString("<h2>Data</h2>\n<ul>\n")
		for _, d := range b.Data {
			s.WriteString("<li>" + e(d) + "</li>\n")
		}
		s.WriteString("</ul>\n")
	}
	para("Methods", b.Methods)
	para("Results", b.Results)
	if len(b.Items) > 0 {
		s.WriteString("<h2>Figures and tables</h2>\n")
	}
	for i, it := range b.Items {
		n := fmt.Sprintf("%d", i+1)
		switch {
		case it.Err != "":
			s.WriteString("<p class=\"hl-err\">Item " + n + " (" + e(it.Analysis) + "): " + e(it.Err) + "</p>\n")
		case it.SVG != "":
			// the chart builders escape every text they draw
			s.WriteString("<figure>\n" + it.SVG + "\n<figcaption>Figure " + n + ". " + e(it.Title) + "</figcaption>\n")
			if it.Table != nil {
				s.WriteString("<details><summary>The numbers behind figure " + n + "</summary>\n" + tableHTML(*it.Table) + "</details>\n")
			}
			s.WriteString("</figure>\n")
		case it.Table != nil:
			s.WriteString("<figure>\n" + tableHTML(*it.Table) + "<figcaption>Table " + n + ". " + e(it.Title) + "</figcaption>\n</figure>\n")
		}
	}
	if len(b.Caveats) > 0 {
		s.WriteString("<h2>Caveats</h2>\n<ul>\n")
		for _, c := range b.Caveats {
			s.WriteString("<li>" + e(c) + "</li>\n")
		}
		s.WriteString("</ul>\n")
	}
	if len(b.References) > 0 {
		s.WriteString("<h2>References</h2>\n<ul>\n")
		for _, r := range b.References {
			s.WriteString("<li>" + e(r) + "</li>\n")
		}
		s.WriteString("</ul>\n")
	}
	return s.String()
}

func tableHTML(t analysis.Table) string {
	e := html.EscapeString
	var s strings.Builder
	s.WriteString("<table>\n<thead><tr>")
	for _, c := range t.Columns {
		s.WriteString("<th scope=\"col\">" + e(c) + "</th>")
	}
	s.WriteString("</tr></thead>\n<tbody>\n")
	for _, r := range t.Rows {
		s.WriteString("<tr>")
		for _, c := range r {
			s.WriteString("<td>" + e(c) + "</td>")
		}
		s.WriteString("</tr>\n")
	}
	s.WriteString("</tbody>\n</table>\n")
	return s.String()
}

// FigureName is the file name of item i's figure (0-based) beside the
// Markdown text.
func FigureName(i int, it Item) string {
	part := it.Part
	if part == "" {
		part = "figure"
	}
	return fmt.Sprintf("figure-%02d-%s-%s.svg", i+1, safe(it.Analysis), safe(part))
}

func safe(s string) string {
	var b strings.Builder
	for _, r := range s {
		if r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '-' || r == '_' || r == '.' {
			b.WriteRune(r)
		} else {
			b.WriteByte('-')
		}
	}
	return strings.TrimLeft(b.String(), ".")
}

// Markdown writes the briefing as Markdown that links each figure as an
// SVG file beside it; figures maps those file names to their SVG text.
func (b *Brief) Markdown() (text string, figures map[string]string) {
	figures = map[string]string{}
	var s strings.Builder
	s.WriteString("# " + mdText(b.Title) + "\n")
	list := func(title string, l []string, bullet bool) {
		if len(l) == 0 {
			return
		}
		s.WriteString("\n## " + title + "\n\n")
		for _, p := range l {
			if bullet {
				s.WriteString("- " + mdText(p) + "\n")
			} else {
				s.WriteString(mdText(p) + "\n\n")
			}
		}
	}
	list("Data", b.Data, true)
	list("Methods", b.Methods, false)
	list("Results", b.Results, false)
	if len(b.Items) > 0 {
		s.WriteString("\n## Figures and tables\n")
	}
	for i, it := range b.Items {
		n := i + 1
		switch {
		case it.Err != "":
			fmt.Fprintf(&s, "\nItem %d (%s): %s\n", n, mdText(it.Analysis), mdText(it.Err))
		case it.SVG != "":
			name := FigureName(i, it)
			figures[name] = it.SVG
			fmt.Fprintf(&s, "\n![Figure %d. %s](%s)\n\n*Figure %d. %s*\n", n, mdText(it.Title), name, n, mdText(it.Title))
			if it.Table != nil {
				s.WriteString("\n" + tableMD(*it.Table))
			}
		case it.Table != nil:
			fmt.Fprintf(&s, "\n*Table %d. %s*\n\n%s", n, mdText(it.Title), tableMD(*it.Table))
		}
	}
	list("Caveats", b.Caveats, true)
	list("References", b.References, true)
	return s.String(), figures
}

// mdText keeps text from being read as Markdown or HTML markup.
func mdText(s string) string {
	r := strings.NewReplacer("\\", "\\\\", "*", "\\*", "_", "\\_", "`", "\\`", "[", "\\[", "]", "\\]", "<", "&lt;", ">", "&gt;", "|", "\\|", "#", "\\#", "\n", " ", "\r", " ")
	return r.Replace(s)
}

func tableMD(t analysis.Table) string {
	var s strings.Builder
	row := func(cells []string) {
		s.WriteString("|")
		for _, c := range cells {
			s.WriteString(" " + mdText(c) + " |")
		}
		s.WriteString("\n")
	}
	row(t.Columns)
	s.WriteString("|")
	for range t.Columns {
		s.WriteString(" --- |")
	}
	s.WriteString("\n")
	for _, r := range t.Rows {
		row(r)
	}
	return s.String()
}

// ZipFile is one file of a zip archive.
type ZipFile struct {
	Name string
	Data []byte
}

// Zip writes files as a zip archive with stored (uncompressed) entries
// (PKWARE APPNOTE 6.3: local headers, central directory, end record).
// Written by hand because archive/zip brings the deflate code into the
// page; SVG and Markdown are small.
func Zip(files []ZipFile) []byte {
	var out, central []byte
	le16 := binary.LittleEndian.AppendUint16
	le32 := binary.LittleEndian.AppendUint32
	const dosDate = 0x5B81 // 2025-12-01, a fixed date so archives are reproducible
	for _, f := range files {
		crc := crc32.ChecksumIEEE(f.Data)
		off := len(out)
		hdr := func(b []byte) []byte {
			b = le16(b, 20)     // version needed
			b = le16(b, 0x0800) // flags: names are UTF-8
			b = le16(b, 0)      // method: stored
			b = le16(b, 0)      // time
			b = le16(b, dosDate)
			b = le32(b, crc)
			b = le32(b, uint32(len(f.Data)))
			b = le32(b, uint32(len(f.Data)))
			b = le16(b, uint16(len(f.Name)))
			return le16(b, 0) // extra length
		}
		out = le32(out, 0x04034b50)
		out = hdr(out)
		out = append(out, f.Name...)
		out = append(out, f.Data...)
		central = le32(central, 0x02014b50)
		central = le16(central, 20) // version made by
		central = hdr(central)
		central = le16(central, 0) // comment length
		central = le16(central, 0) // disk
		central = le16(central, 0) // internal attributes
		central = le32(central, 0) // external attributes
		central = le32(central, uint32(off))
		central = append(central, f.Name...)
	}
	cdOff := len(out)
	out = append(out, central...)
	out = le32(out, 0x06054b50)
	out = le16(out, 0)
	out = le16(out, 0)
	out = le16(out, uint16(len(files)))
	out = le16(out, uint16(len(files)))
	out = le32(out, uint32(len(central)))
	out = le32(out, uint32(cdOff))
	return le16(out, 0)
}
