//! The report's style sheet, inlined into the page's `<style>` element.
//!
//! Only locally installed fonts are named (no web fonts), and nothing is
//! fetched. The sheet avoids `<` and `&` so the page stays well-formed XML.

/// CSS for screen and print.
pub const STYLE: &str = r#"
:root {
  --ink: #1c2330;
  --muted: #5d6677;
  --rule: #dfe3ea;
  --panel: #f6f7f9;
  --accent: #0b6a70;
  --accent-soft: #e3f1f1;
  --warn-ink: #6b4200;
  --warn-bg: #fff4dc;
  --warn-rule: #e0a632;
}
* { box-sizing: border-box; }
html { background: #ffffff; }
body {
  margin: 0;
  color: var(--ink);
  font-family: system-ui, "Segoe UI", "Helvetica Neue", Helvetica, Arial, "DejaVu Sans", sans-serif;
  font-size: 15px;
  line-height: 1.45;
}
main { max-width: 1120px; margin: 0 auto; padding: 28px 32px 48px; }
header.masthead { border-bottom: 3px solid var(--accent); padding-bottom: 14px; margin-bottom: 18px; }
.kicker { margin: 0; color: var(--accent); font-weight: 600; letter-spacing: 0.08em; text-transform: uppercase; font-size: 12px; }
h1 { margin: 4px 0 6px; font-size: 28px; line-height: 1.2; }
h2 { font-size: 20px; margin: 0 0 10px; }
h3 { font-size: 15px; margin: 18px 0 8px; color: var(--muted); text-transform: uppercase; letter-spacing: 0.05em; }
.sub { margin: 0; color: var(--muted); }
.caution {
  border: 1px solid var(--warn-rule);
  border-left: 6px solid var(--warn-rule);
  background: var(--warn-bg);
  color: var(--warn-ink);
  padding: 10px 14px;
  border-radius: 4px;
  margin: 0 0 22px;
}
.caution strong { margin-right: 6px; }
section { margin: 0 0 28px; }
.glance { display: grid; grid-template-columns: repeat(auto-fill, minmax(240px, 1fr)); gap: 12px; }
.card { border: 1px solid var(--rule); border-top: 4px solid var(--accent); border-radius: 6px; padding: 10px 14px; background: #fff; }
.card .thumb img { display: block; width: 100%; height: auto; margin: 2px 0 4px; }
.card .name { font-weight: 700; margin: 0 0 4px; }
.card .lead { font-size: 22px; font-weight: 700; color: var(--accent); margin: 0; }
.card .region { margin: 0 0 6px; }
.card .small { color: var(--muted); font-size: 13px; margin: 0; }
.card .flag { color: #9a3412; font-size: 13px; font-weight: 600; margin: 6px 0 0; }
.columns { display: grid; grid-template-columns: 1fr 1fr; gap: 24px; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 4px 16px; margin: 0; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; overflow-wrap: anywhere; }
table { border-collapse: collapse; width: 100%; font-variant-numeric: tabular-nums; }
th, td { text-align: left; padding: 5px 8px; border-bottom: 1px solid var(--rule); vertical-align: top; }
thead th { border-bottom: 2px solid var(--ink); font-size: 13px; color: var(--muted); font-weight: 600; }
td.num, th.num { text-align: right; white-space: nowrap; }
.table-scroll { overflow-x: auto; }
table.compact { font-size: 13px; }
table.compact th, table.compact td { padding: 4px 6px; }
table.compact thead th { white-space: normal; }
td.hash { font-family: ui-monospace, "DejaVu Sans Mono", Menlo, Consolas, monospace; font-size: 12px; overflow-wrap: anywhere; }
tbody th { font-weight: 500; }
tr.lead-row td, tr.lead-row th { background: var(--accent-soft); }
tr.faint td, tr.faint th { color: var(--muted); }
p.note { color: var(--muted); font-size: 13px; margin: 6px 0 0; }
ul.notes { margin: 6px 0 0; padding-left: 20px; color: var(--muted); font-size: 13px; }
.labels { font-size: 13px; color: var(--muted); overflow-wrap: anywhere; }
.provenance { border-top: 1px solid var(--rule); padding-top: 18px; }
.component { border-top: 1px solid var(--rule); padding-top: 18px; }
.component .headline { color: var(--muted); margin: -4px 0 10px; }
.figures { display: flex; flex-wrap: wrap; gap: 14px; align-items: flex-start; }
.figures.cortex { display: grid; grid-template-columns: repeat(3, max-content) 84px; gap: 6px 14px; }
.figures.cortex figure:last-child { grid-column: 4; grid-row: 1 / span 3; align-self: center; }
.view { position: relative; display: block; }
.view svg.overlay { position: absolute; left: 0; top: 0; width: 100%; height: 100%; }
.view .mark { position: absolute; font-size: 11px; font-weight: 600; line-height: 1; color: var(--muted); }
.view .mark.w { left: 2px; top: 50%; transform: translateY(-50%); }
.view .mark.e { right: 2px; top: 50%; transform: translateY(-50%); }
.view .mark.n { top: 2px; left: 50%; transform: translateX(-50%); }
.view .mark.s { bottom: 2px; left: 50%; transform: translateX(-50%); }
figure { margin: 0; }
figure img, figure svg { display: block; max-width: 100%; height: auto; }
figcaption { font-size: 12.5px; color: var(--muted); margin-top: 4px; max-width: 520px; }
footer { border-top: 1px solid var(--rule); padding-top: 12px; color: var(--muted); font-size: 13px; }
@media (max-width: 760px) {
  .columns { grid-template-columns: 1fr; }
  .figures.cortex { grid-template-columns: repeat(2, max-content); }
  .figures.cortex figure:last-child { grid-column: auto; grid-row: auto; }
}
@media print {
  main { max-width: none; padding: 0; }
  body { font-size: 11pt; }
  section, figure, table, .card { break-inside: avoid; }
  .component, .provenance { break-before: page; }
  .caution { background: #ffffff; }
}
"#;
