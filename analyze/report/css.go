package report

// pageCSS is the report's stylesheet, inline in every page. It names only fonts that a
// reader's machine already has (metric-compatible families first, a generic family
// last), fetches nothing, and has a print layout for A4 and Letter alike: the page size
// is left to the printer, margins are set, sections follow each other without forced
// page breaks (the summary fills the first page), a plot shares its row with the short
// table after it, and no figure or table row is split.
// At a phone's width the margins narrow and wide tables scroll inside their own box.
const pageCSS = `
:root {
  --ink: #222; --muted: #666; --rule: #cfd6dc; --accent: #0b5f8f; --paper: #fff;
  --fault: #b23a00; --warn: #8a5a00; --info: #3d5566;
  --fault-bg: #fbe9e0; --warn-bg: #fdf3d9; --info-bg: #eaf0f4;
}
* { box-sizing: border-box; }
html { background: #eef1f3; }
body {
  margin: 0; padding: 1.5rem 0 3rem; color: var(--ink); background: transparent;
  font-family: "Liberation Sans", Arial, Helvetica, "Nimbus Sans", sans-serif;
  font-size: 15px; line-height: 1.45;
  -webkit-print-color-adjust: exact; print-color-adjust: exact;
}
header.top, nav.toc, main, footer {
  max-width: 52rem; margin: 0 auto; padding: 0 1.6rem; background: var(--paper);
}
header.top { padding-top: 1.4rem; padding-bottom: 0.6rem; border-top: 5px solid var(--accent); }
footer { padding-bottom: 1.2rem; color: var(--muted); font-size: 0.85em; }
h1 { font-size: 1.55rem; margin: 0 0 0.6rem; letter-spacing: 0.01em; overflow-wrap: anywhere; }
h2 {
  font-size: 1.2rem; margin: 0 0 0.7rem; padding-bottom: 0.2rem;
  border-bottom: 2px solid var(--accent); color: var(--accent);
}
h3 { font-size: 1rem; margin: 1.1rem 0 0.4rem; }
section { padding: 1.3rem 0 0.6rem; }
p { margin: 0.45rem 0; }
a { color: var(--accent); }
code { font-family: "Liberation Mono", "Courier New", monospace; font-size: 0.88em; }
dl.facts {
  display: grid; grid-template-columns: repeat(auto-fill, minmax(12.5rem, 1fr));
  gap: 0.15rem 1.2rem; margin: 0.4rem 0 0.6rem; font-size: 0.9em;
}
dl.facts div { display: flex; gap: 0.5rem; border-bottom: 1px dotted var(--rule); }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0 0 0 auto; text-align: right; font-variant-numeric: tabular-nums; overflow-wrap: anywhere; }
p.links, p.generated { font-size: 0.9em; color: var(--muted); }
p.caution-line {
  font-size: 0.9em; padding: 0.35rem 0.6rem; border-left: 4px solid var(--warn);
  background: var(--warn-bg);
}
nav.toc { font-size: 0.9em; padding-bottom: 0.4rem; }
nav.toc ol { margin: 0; padding: 0.5rem 0 0.5rem 1.4rem; columns: 2; border-top: 1px solid var(--rule); border-bottom: 1px solid var(--rule); }
p.verdict {
  font-size: 1.12rem; margin: 0.2rem 0 0.8rem; padding: 0.6rem 0.8rem;
  background: #f3f6f8; border-left: 5px solid var(--accent);
}
p.verdict .who { color: var(--accent); }
span.n { font-weight: bold; white-space: nowrap; font-variant-numeric: tabular-nums; }
ol.findings { list-style: none; margin: 0; padding: 0; }
li.finding { margin: 0 0 0.6rem; padding: 0.45rem 0.7rem; border-left: 5px solid; break-inside: avoid; }
li.sev-fault { border-color: var(--fault); background: var(--fault-bg); }
li.sev-warn { border-color: var(--warn); background: var(--warn-bg); }
li.sev-info { border-color: var(--info); background: var(--info-bg); }
.badge {
  display: inline-block; min-width: 4.2em; text-align: center; font-size: 0.75em; font-weight: bold;
  letter-spacing: 0.06em; padding: 0.05em 0.4em; border-radius: 3px; color: #fff; vertical-align: 0.1em;
}
.sev-fault .badge { background: var(--fault); }
.sev-warn .badge { background: var(--warn); }
.sev-info .badge { background: var(--info); }
.fhead .msg { font-weight: bold; }
.fhead .code { color: var(--muted); margin-left: 0.3em; }
dl.numbers { display: flex; flex-wrap: wrap; gap: 0.1rem 1.2rem; margin: 0.3rem 0; font-size: 0.9em; }
dl.numbers div { display: flex; gap: 0.35rem; }
dl.numbers dt { color: var(--muted); }
dl.numbers dd { margin: 0; font-variant-numeric: tabular-nums; }
p.suggest .label { font-weight: bold; }
ul.anotes { margin: 0.2rem 0 0.6rem; padding-left: 1.3rem; font-size: 0.92em; color: var(--muted); }
p.absent {
  color: var(--muted); font-style: italic; padding: 0.5rem 0.7rem; border: 1px dashed var(--rule);
}
figure { margin: 0.6rem 0 1rem; break-inside: avoid; }
svg.plot { display: block; width: 100%; max-width: 36rem; height: auto; margin: 0 auto; }
svg.plot image { image-rendering: pixelated; }
svg.plot text { font-family: "Liberation Sans", Arial, Helvetica, "Nimbus Sans", sans-serif; }
figcaption { font-size: 0.88em; color: var(--muted); margin-top: 0.3rem; }
.tablewrap { overflow-x: auto; margin: 0.5rem 0 0.9rem; }
table { border-collapse: collapse; width: 100%; font-size: 0.86em; font-variant-numeric: tabular-nums; }
table.kv { width: auto; min-width: 65%; }
caption { text-align: left; font-weight: bold; padding: 0 0 0.3rem; }
th { text-align: left; border-bottom: 2px solid var(--ink); padding: 0.25rem 0.45rem; vertical-align: bottom; }
td { border-bottom: 1px solid var(--rule); padding: 0.2rem 0.45rem; vertical-align: top; }
tbody tr:nth-child(even) td { background: #f7f9fa; }
td.num, th.num { text-align: right; }
td.num { white-space: nowrap; }
td.ok::before { content: "\2713\00a0"; }
td.bad { font-weight: bold; color: var(--fault); }
td.bad::before { content: "\2717\00a0"; }
td.diff { font-weight: bold; }
td.diff::before { content: "\2260\00a0"; }
td.muted { color: var(--muted); }
p.note { font-size: 0.9em; }
dl.items div { margin: 0 0 0.55rem; break-inside: avoid; }
dl.items dt { font-weight: bold; }
dl.items dd { margin: 0.1rem 0 0 1.2rem; }
dl.items cite { display: block; color: var(--muted); font-size: 0.9em; }
@media (min-width: 760px) {
  section.pair { display: grid; grid-template-columns: 1fr 1fr; column-gap: 1.2rem; align-items: start; }
  section.pair > * { grid-column: 1 / -1; }
  section.pair > figure { grid-column: auto; }
}
details.more > summary { cursor: pointer; color: var(--accent); font-weight: bold; margin: 0.3rem 0; }
@media (max-width: 600px) {
  body { font-size: 14px; padding-top: 0; }
  header.top, nav.toc, main, footer { padding-left: 0.7rem; padding-right: 0.7rem; }
  nav.toc ol { columns: 1; }
  table.kv { min-width: 0; }
}
@media print {
  @page { margin: 14mm 13mm 16mm; }
  html, body { background: #fff; }
  body { font-size: 9pt; padding: 0; }
  header.top, nav.toc, main, footer { max-width: none; padding: 0; }
  header.top { border-top: 0; }
  nav.toc { display: none; }
  main > section { padding-top: 0.6rem; display: grid; grid-template-columns: 1fr 1fr; column-gap: 6mm; align-items: start; }
  main > section > * { grid-column: 1 / -1; }
  main > section > figure { grid-column: 1; }
  main > section > figure + .tablewrap:has(table.kv, table.segments, table.errors) { grid-column: 2; }
  p.verdict { font-size: 1.05rem; }
  h2 { break-after: avoid; }
  svg.plot { max-width: 8cm; }
  figcaption { font-size: 8pt; }
  figure, tr, li.finding, dl.items div { break-inside: avoid; }
  thead { display: table-header-group; }
  .tablewrap { overflow: visible; }
  table { font-size: 8pt; }
  a { color: inherit; text-decoration: none; }
}
`
