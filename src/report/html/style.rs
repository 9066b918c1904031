//! The page's style sheet, inline in its `<style>` element: colours, tables, notices,
//! figures, and the rules for print.
//!
//! Text only: no fonts, images or other files are fetched, and no element is written here.

pub(super) const STYLE: &str = r#"
:root { --ink: #1f2933; --muted: #5f6b76; --rule: #cfd6dd; --band: #f3f5f7; --accent: #1d4e89;
        --warn-bg: #fff6e0; --warn: #8a5a00; --bad-bg: #fdecec; --bad: #9b1c1c; --ok: #24613a; }
* { box-sizing: border-box; }
body { margin: 0; color: var(--ink); background: #fff;
       font: 15px/1.45 system-ui, -apple-system, "Segoe UI", "Helvetica Neue", Arial, sans-serif; }
.head { padding: 22px 32px 16px; border-bottom: 3px solid var(--accent); background: var(--band); }
.kicker { text-transform: uppercase; letter-spacing: .08em; font-size: 12px; color: var(--muted); }
h1 { margin: 4px 0 6px; font-size: 24px; font-weight: 650; word-break: break-all; }
h2 { font-size: 20px; margin: 0 0 10px; }
h3 { font-size: 16px; margin: 22px 0 8px; padding-bottom: 3px; border-bottom: 1px solid var(--rule); }
h4 { font-size: 14px; margin: 14px 0 6px; color: var(--muted); font-weight: 600; }
.meta { margin: 0; color: var(--muted); font-size: 13px; }
.sheet { border-collapse: collapse; margin: 6px 0 8px; font-size: 13px; }
.sheet th { text-align: left; font-weight: normal; color: var(--muted); padding: 1px 14px 1px 0; }
.sheet td { padding: 1px 0; }
.live { color: var(--accent); }
main { padding: 18px 32px 40px; max-width: 1180px; }
.caution { border: 1px solid var(--rule); border-left: 4px solid var(--warn); background: var(--warn-bg);
           padding: 10px 14px; font-size: 13px; margin: 0 0 22px; }
section.mesh { border-top: 2px solid var(--ink); margin-top: 30px; padding-top: 12px; }
.mesh-head { display: flex; flex-wrap: wrap; align-items: baseline; gap: 6px 14px; }
.mesh-head h2 { margin: 0; word-break: break-all; }
.tag { display: inline-block; font-size: 12px; padding: 1px 8px; border-radius: 3px;
       border: 1px solid var(--rule); color: var(--muted); }
.tag.stale, .tag.fail { border-color: var(--bad); color: var(--bad); font-weight: 700; }
.tag.pass { border-color: var(--ok); color: var(--ok); font-weight: 700; }
.notice { padding: 8px 12px; margin: 10px 0; font-size: 14px; }
.notice.stale, .notice.fail { background: var(--bad-bg); border-left: 4px solid var(--bad); }
.notice.warn { background: var(--warn-bg); border-left: 4px solid var(--warn); }
.notice ul { margin: 4px 0 0; padding-left: 20px; }
table { border-collapse: collapse; margin: 6px 0 10px; font-size: 13.5px; }
th, td { padding: 4px 10px; border-bottom: 1px solid var(--rule); text-align: right; vertical-align: top; }
th { font-weight: 600; background: var(--band); border-bottom: 1px solid var(--muted); }
th:first-child, td:first-child { text-align: left; }
td { font-variant-numeric: tabular-nums; }
td.text, th.text { text-align: left; }
tr.total td { font-weight: 650; }
.unit { font-weight: 400; color: var(--muted); }
.wide { overflow-x: auto; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 3px 16px; margin: 6px 0 10px; font-size: 14px; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; font-variant-numeric: tabular-nums; }
.up { color: var(--bad); } .down { color: var(--accent); }
figure { margin: 12px 0; }
figure svg { max-width: 100%; height: auto; border: 1px solid var(--rule); }
figcaption { font-size: 13px; color: var(--muted); }
.muted { color: var(--muted); }
footer { margin-top: 36px; padding-top: 10px; border-top: 1px solid var(--rule); font-size: 12.5px; color: var(--muted); }
code { font-size: 92%; }
.v3d-wrap { display: flex; gap: 12px; align-items: flex-start; flex-wrap: wrap; }
canvas.v3d { max-width: 100%; height: auto; border: 1px solid var(--rule); cursor: grab; background: #fbfbf8; }
canvas.v3d:active { cursor: grabbing; }
svg.v3d-legend { font-size: 11px; fill: #2b2f36; }
svg.v3d-legend .lg-title { font-weight: 600; }
@media print {
  canvas.v3d { border: none; }
  body { font-size: 11pt; }
  .head { background: none; padding: 0 0 8px; }
  .live { display: none; }
  main { padding: 8px 0; max-width: none; }
  th { background: none; }
  .caution, .notice { background: none; }
  section.mesh { break-before: page; border-top: none; }
  table, figure, dl.facts, .notice { break-inside: avoid; }
  figure svg { border: none; }
  a { color: inherit; text-decoration: none; }
}
"#;
