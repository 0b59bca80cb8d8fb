package report

// css is the report's style sheet: readable on screen, and on paper a page
// break before each section, charts and tables kept whole and scaled to the
// page, and code wrapped rather than cut at the margin.
const css = `:root { --ink: #1d2430; --muted: #5b6472; --rule: #d5dae1; --accent: #2c5d8a; --bad: #9c2b12; --warn: #7a5a00; }
html { font-size: 15px; }
body { margin: 0 auto; max-width: 60rem; padding: 1.5rem 1.25rem 4rem; color: var(--ink); background: #fff;
  font-family: "Liberation Sans", Arimo, Arial, Helvetica, sans-serif; line-height: 1.45; }
h1, h2, h3, h4 { line-height: 1.2; margin: 1.2em 0 0.5em; }
h1 { font-size: 1.7rem; } h2 { font-size: 1.35rem; } h3 { font-size: 1.15rem; }
a { color: var(--accent); }
code, pre, .nudge-hash { font-family: "Liberation Mono", Cousine, Menlo, Consolas, monospace; font-size: 0.86rem; }
pre { white-space: pre-wrap; overflow-wrap: anywhere; margin: 0.4em 0; }
table { border-collapse: collapse; max-width: 100%; }
th, td { padding: 0.2em 0.6em; vertical-align: top; }
.nudge-facts { border-bottom: 2px solid var(--rule); padding-bottom: 1rem; }
.nudge-sub { color: var(--muted); margin-top: -0.3em; }
.nudge-status { font-weight: bold; }
.nudge-failed { color: var(--bad); }
.nudge-facts-table { margin: 0.8em 0; }
.nudge-facts-table th { text-align: left; white-space: nowrap; color: var(--muted); font-weight: normal; }
.nudge-facts-table ul { margin: 0; padding-left: 1.1em; }
.nudge-hash { overflow-wrap: anywhere; color: var(--muted); }
.nudge-caution-top { border-left: 4px solid var(--warn); padding: 0.4em 0.8em; background: #fbf7ea; }
.nudge-part { margin-top: 1.5rem; }
.nudge-md table { border: 1px solid var(--rule); }
.nudge-md th, .nudge-md td { border: 1px solid var(--rule); }
.nudge-md blockquote { border-left: 4px solid var(--rule); margin: 0.8em 0; padding: 0.1em 0.9em; color: var(--muted); }
.nudge-cell { margin: 1rem 0; }
.nudge-in { display: flex; gap: 0.6em; align-items: baseline; }
.nudge-prompt { color: var(--muted); font-family: "Liberation Mono", monospace; font-size: 0.8rem; min-width: 2.6em; text-align: right; }
.nudge-source { flex: 1; background: #f4f6f9; border: 1px solid var(--rule); border-radius: 3px; padding: 0.5em 0.7em; }
.nudge-output, .nudge-stream, .nudge-error, .nudge-notrun { margin-left: 3.2em; }
.nudge-output { overflow-x: auto; }
.nudge-output table { font-size: 0.92rem; }
.nudge-output th { text-align: left; border-bottom: 1px solid var(--rule); }
.nudge-stderr { color: var(--warn); }
.nudge-error { border-left: 4px solid var(--bad); padding: 0.3em 0.8em; background: #fbeeea; }
.nudge-error-head { color: var(--bad); font-weight: bold; margin: 0.2em 0; }
.nudge-notrun { color: var(--muted); font-style: italic; }
.nudge-noimage { color: var(--muted); font-style: italic; }
figure { margin: 0.5em 0; }
img, svg.nudge-svg { max-width: 100%; height: auto; }
@page { margin: 15mm 13mm; }
@media print {
  html { font-size: 11pt; }
  body { max-width: none; padding: 0; }
  .nudge-part { break-before: page; }
  .nudge-output { overflow: visible; }
  figure, svg, img, table, .nudge-error, .nudge-in { break-inside: avoid; }
  h1, h2, h3 { break-after: avoid; }
  .nudge-output table { font-size: 9pt; }
  a { color: inherit; text-decoration: none; }
}
`
