package report

import (
	"html/template"
	"strings"
)

// page is everything the template shows.
type page struct {
	Title     string
	Generated string
	CSS       template.CSS
	Facts     []fact
	Verdict   template.HTML
	Verdicts  []namedVerdict // Compare: one per capture
	Findings  []findingView
	Notes     []string // what the analysis could not determine, in its words
	Links     []link
	Sections  []*section
}

func (p *page) add(s *section) {
	if s != nil {
		p.Sections = append(p.Sections, s)
	}
}

type namedVerdict struct {
	Name    string
	Verdict template.HTML
}

type fact struct{ Label, Value string }

type link struct{ Text, Href string }

type findingView struct {
	Severity string // "fault", "warn", "info"
	Badge    string // the severity in words
	Code     string
	Message  string
	Suggest  string
	Numbers  []fact
}

// section is one part of the report. Collapsed ones (methods, safety) show their
// title as the summary of a <details> box.
type section struct {
	ID, Title string
	Intro     []string
	Absent    []string // plain statements of data that is missing
	Figures   []figure
	Tables    []*table
	Notes     []note
	Items     []item // a definition list: methods, cautions
	Collapsed bool   // shown closed, in a <details> box
	Class     string // "pair": figures two to a row on a wide screen
}

type note struct {
	Text     string
	LinkText string
	Href     string
	After    string
}

type item struct{ Term, Text, Ref string }

type table struct {
	Caption string
	Class   string
	Head    []string
	Rows    [][]cell
}

// NumCol reports whether column i holds numbers in every row (its heading then aligns
// right with them).
func (t *table) NumCol(i int) bool {
	if len(t.Rows) == 0 {
		return false
	}
	for _, r := range t.Rows {
		if i >= len(r) || (!strings.Contains(r[i].Class, "num") && r[i].Text != "") {
			return false
		}
	}
	return true
}

type cell struct {
	Text  string
	Class string // "num" right-aligns; "ok", "bad", "muted" mark status (with words, not colour alone)
	Title string
}

var pageTemplate = template.Must(template.New("page").Funcs(template.FuncMap{"lower": strings.ToLower}).Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="capcycle">
<title>{{.Title}}</title>
<style>{{.CSS}}</style>
</head>
<body>
<header class="top">
<h1>{{.Title}}</h1>
{{- if .Facts}}
<dl class="facts">
{{- range .Facts}}<div><dt>{{.Label}}</dt><dd>{{.Value}}</dd></div>{{end}}
</dl>
{{- end}}
{{- if .Links}}
<p class="links">Beside this file:{{range $i, $l := .Links}}{{if $i}},{{end}} <a href="{{$l.Href}}">{{$l.Text}}</a>{{end}}.</p>
{{- end}}
<p class="caution-line">Charged capacitors and cells can burn, and shorted ones can deliver large currents: read the <a href="#safety">safety notes</a> before you touch the circuit.</p>
{{- if .Generated}}
<p class="generated">Made by capcycle on {{.Generated}}.</p>
{{- end}}
</header>
<nav class="toc" aria-label="Contents"><ol>
<li><a href="#verdict">Verdict and findings</a></li>
{{- range .Sections}}
<li><a href="#{{.ID}}">{{.Title}}</a></li>
{{- end}}
</ol></nav>
<main>
<section id="verdict" class="verdict-section">
<h2>Verdict</h2>
{{- if .Verdicts}}
{{- range .Verdicts}}
<p class="verdict"><strong class="who">{{.Name}}:</strong> {{.Verdict}}</p>
{{- end}}
{{- else}}
<p class="verdict">{{.Verdict}}</p>
{{- end}}
{{- if .Findings}}
<h3>Findings</h3>
<ol class="findings">
{{- range .Findings}}
<li class="finding sev-{{.Severity}}">
<p class="fhead"><span class="badge">{{.Badge}}</span> <span class="msg">{{.Message}}</span> <code class="code">{{.Code}}</code></p>
{{- if .Numbers}}
<dl class="numbers">{{range .Numbers}}<div><dt>{{.Label}}</dt><dd>{{.Value}}</dd></div>{{end}}</dl>
{{- end}}
{{- if .Suggest}}
<p class="suggest"><span class="label">What to try:</span> {{.Suggest}}</p>
{{- end}}
</li>
{{- end}}
</ol>
{{- else if not .Verdicts}}
<p class="absent">The analysis reported no findings.</p>
{{- end}}
{{- if .Notes}}
<h3>What the capture could not tell</h3>
<ul class="anotes">
{{- range .Notes}}
<li>{{.}}</li>
{{- end}}
</ul>
{{- end}}
</section>
{{- range .Sections}}
<section id="{{.ID}}"{{if .Class}} class="{{.Class}}"{{end}}>
<h2>{{.Title}}</h2>
{{- if .Collapsed}}
<details class="more"><summary>Show the {{.Title | lower}}</summary>
{{- end}}
{{- range .Intro}}
<p>{{.}}</p>
{{- end}}
{{- range .Absent}}
<p class="absent">{{.}}</p>
{{- end}}
{{- range .Figures}}
{{- if .Err}}
<p class="absent">This plot could not be drawn: {{.Err}}</p>
{{- else}}
<figure>
{{.SVG}}
<figcaption>{{.Caption}}</figcaption>
</figure>
{{- end}}
{{- end}}
{{- range .Tables}}{{$t := .}}
<div class="tablewrap">
<table class="{{.Class}}">
{{- if .Caption}}<caption>{{.Caption}}</caption>{{end}}
<thead><tr>{{range $i, $h := .Head}}<th scope="col"{{if $t.NumCol $i}} class="num"{{end}}>{{$h}}</th>{{end}}</tr></thead>
<tbody>
{{- range .Rows}}
<tr>{{range .}}<td{{if .Class}} class="{{.Class}}"{{end}}{{if .Title}} title="{{.Title}}"{{end}}>{{.Text}}</td>{{end}}</tr>
{{- end}}
</tbody>
</table>
</div>
{{- end}}
{{- range .Notes}}
<p class="note">{{.Text}}{{if .Href}} <a href="{{.Href}}">{{.LinkText}}</a>{{end}}{{.After}}</p>
{{- end}}
{{- if .Items}}
<dl class="items">
{{- range .Items}}
<div><dt>{{.Term}}</dt><dd>{{.Text}}{{if .Ref}} <cite>{{.Ref}}</cite>{{end}}</dd></div>
{{- end}}
</dl>
{{- end}}
{{- if .Collapsed}}
</details>
{{- end}}
</section>
{{- end}}
</main>
<footer><p>Written by capcycle from the analysis alone: rebuilding it from the saved analysis JSON gives the same page.</p></footer>
</body>
</html>
`))
