"""The page stylesheet: one readable column (fine at 800 px), and a print stylesheet for paper."""

CSS = """
:root { --ink: #222; --muted: #5c5c5c; --rule: #d9d9d9; --accent: #24506e; --soft: #f5f6f7; }
* { box-sizing: border-box; }
html { font-size: 16px; }
body { margin: 0 auto; max-width: 60rem; padding: 1.25rem 1rem 3rem; color: var(--ink);
  font-family: system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial, sans-serif;
  line-height: 1.5; background: #fff; overflow-wrap: anywhere; }
h1 { font-size: 1.7rem; line-height: 1.2; margin: 0.2rem 0 0.4rem; }
h2 { font-size: 1.25rem; margin: 2.2rem 0 0.6rem; padding-top: 0.6rem;
  border-top: 2px solid var(--accent); }
h3 { font-size: 1.05rem; margin: 1.2rem 0 0.3rem; }
a { color: var(--accent); }
.bw-kicker { color: var(--muted); font-size: 0.9rem; margin: 0; }
.bw-headline { font-size: 1.2rem; font-weight: 600; margin: 1rem 0 0.4rem; }
.bw-muted, .bw-note, .bw-alt { color: var(--muted); font-size: 0.9rem; }
.bw-alt { margin: 0.2rem 0; }
nav.bw-nav { font-size: 0.9rem; margin: 0.8rem 0; display: flex; flex-wrap: wrap;
  gap: 0.3rem 1rem; }
.bw-figure { margin: 1.2rem 0 1.8rem; }
.bw-chart { width: 100%; min-height: 360px; }
.bw-chart.bw-tall { min-height: 520px; }
.bw-empty { padding: 0.6rem 0.8rem; background: var(--soft); border-left: 4px solid var(--rule); }
details { margin-top: 0.3rem; }
summary { cursor: pointer; color: var(--accent); font-size: 0.9rem; }
.bw-scroll { overflow-x: auto; max-width: 100%; }
table { border-collapse: collapse; font-size: 0.85rem; margin: 0.4rem 0; }
th, td { text-align: left; padding: 0.2rem 0.6rem 0.2rem 0; border-bottom: 1px solid var(--rule);
  vertical-align: top; }
th { white-space: nowrap; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
.bw-caution { background: var(--soft); border-left: 4px solid var(--accent);
  padding: 0.6rem 0.9rem; margin: 0.8rem 0; }
.bw-caution li { margin: 0.25rem 0; }
dl.bw-methods dt { font-weight: 600; margin-top: 0.6rem; }
dl.bw-methods dd { margin: 0.1rem 0 0 0; }
.bw-ref { color: var(--muted); font-size: 0.85rem; }
footer { margin-top: 2.5rem; padding-top: 0.8rem; border-top: 1px solid var(--rule);
  color: var(--muted); font-size: 0.8rem; }
footer dl { display: grid; grid-template-columns: max-content 1fr; gap: 0.1rem 1rem; margin: 0; }
footer dd { margin: 0; font-family: ui-monospace, "DejaVu Sans Mono", monospace; }
@media (max-width: 42rem) { body { padding: 0.8rem 0.6rem 2rem; } h1 { font-size: 1.4rem; } }
@media print {
  @page { margin: 16mm 14mm; }
  html { font-size: 10.5pt; }
  body { max-width: none; padding: 0; }
  nav.bw-nav, .modebar-container, summary { display: none !important; }
  h2 { break-after: avoid; }
  .bw-figure, table, .bw-caution { break-inside: avoid; }
  .bw-scroll { overflow: visible; }
  a { color: inherit; text-decoration: none; }
}
"""
