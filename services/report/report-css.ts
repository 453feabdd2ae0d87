/** The report's stylesheet: screen and print (A4), system fonts, no external resources. */
export const REPORT_CSS = `
:root { --ink: #1a1a1a; --muted: #5a5a5a; --rule: #d0d0d0; --now: #b30000; --week: #c25e00; --later: #4d4d4d; }
* { box-sizing: border-box; }
body { font: 14px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, "DejaVu Sans", sans-serif; color: var(--ink); margin: 0 auto; max-width: 1200px; padding: 24px; }
h1 { font-size: 22px; margin: 0 0 4px; }
h2 { font-size: 18px; margin: 28px 0 8px; border-bottom: 2px solid var(--ink); padding-bottom: 2px; }
h3 { font-size: 16px; margin: 0 0 4px; }
.sub, .note, figcaption { color: var(--muted); }
.sub { margin: 0 0 16px; }
.kpis { display: grid; grid-template-columns: repeat(auto-fit, minmax(150px, 1fr)); gap: 8px; }
.kpi { border: 1px solid var(--rule); border-radius: 4px; padding: 8px 10px; }
.kpi b { display: block; font-size: 22px; }
.kpi.alert { border-color: var(--now); }
.kpi.alert b { color: var(--now); }
table { border-collapse: collapse; width: 100%; margin: 6px 0 12px; }
th, td { text-align: left; vertical-align: top; padding: 5px 6px; border-bottom: 1px solid var(--rule); }
th { font-size: 12px; text-transform: uppercase; letter-spacing: .03em; color: var(--muted); border-bottom: 2px solid var(--ink); }
td.num, th.num { text-align: right; white-space: nowrap; }
td.nowrap { white-space: nowrap; }
.badge { display: inline-block; padding: 1px 7px; border-radius: 10px; color: #fff; font-size: 12px; font-weight: 600; white-space: nowrap; }
.badge.book-now { background: var(--now); }
.badge.book-this-week { background: var(--week); }
.badge.at-next-service { background: var(--later); }
dl.legend { display: grid; grid-template-columns: max-content 1fr; gap: 4px 10px; margin: 6px 0; }
dl.legend dd { margin: 0; }
.caution-line { font-size: 0.9em; font-weight: 600; margin: 6px 0 0; }
ul.findings, ol.checks { margin: 0; padding-left: 1.2em; }
ul.findings li + li, ol.checks li + li { margin-top: 4px; }
.caution { border: 2px solid var(--now); border-left-width: 8px; padding: 8px 12px; margin: 8px 0 12px; font-weight: 600; }
.vehicle { border-top: 1px solid var(--rule); padding: 14px 0 4px; break-inside: avoid; page-break-inside: avoid; }
.vehicle .headline { margin: 2px 0 8px; }
.charts { display: grid; grid-template-columns: 1fr 1fr; gap: 16px; }
figure { margin: 0; }
svg.chart { width: 100%; height: auto; display: block; }
figcaption { font-size: 12px; margin-top: 2px; }
.check { font-size: 13px; }
.empty { color: var(--muted); font-style: italic; }
footer { margin-top: 28px; font-size: 12px; color: var(--muted); border-top: 1px solid var(--rule); padding-top: 8px; }
@media (max-width: 800px) { .charts { grid-template-columns: 1fr; } }
@media print {
  @page { size: A4; margin: 12mm; }
  body { padding: 0; max-width: none; font-size: 11px; }
  h2 { break-after: avoid; page-break-after: avoid; }
  tr { break-inside: avoid; page-break-inside: avoid; }
  .badge, .caution, .kpi { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
  a { color: inherit; text-decoration: none; }
}
`;
