import {
  kindLabel,
  PRIORITY_LEGEND,
  relatedCodeLabel,
  resolvedReasonLabel,
  RISK_LEGEND,
  sensorEventLabel,
  SEVERITY_LEGEND,
  STATUS_LEGEND,
} from './finding-labels.js';
import { escapeHtml as e } from './html-escape.js';
import { badge, vehicleSectionHtml } from './html-vehicle-section.js';
import { REPORT_CSS } from './report-css.js';
import type { WeeklyReport, WorkFinding, WorkItem } from './weekly-report-schema.js';

const pct = (v: number) => `${Math.round(v * 100)} %`;
const fmt = (v: number, digits = 0) =>
  v.toLocaleString('en-GB', { maximumFractionDigits: digits, minimumFractionDigits: digits });
const longDate = (day: string) =>
  new Date(`${day}T12:00:00Z`).toLocaleDateString('en-GB', {
    weekday: 'short',
    day: 'numeric',
    month: 'short',
    year: 'numeric',
    timeZone: 'UTC',
  });

function kpis(report: WeeklyReport): string {
  const s = report.summary;
  const now = report.workList.filter((w) => w.priority === 'book now').length;
  const week = report.workList.filter((w) => w.priority === 'book this week').length;
  const f = report.findings.totals;
  const unusual = s.silentGateways.filter((g) => g.unusual).length;
  const box = (value: string, label: string, alert = false) =>
    `<div class="kpi${alert ? ' alert' : ''}"><b>${value}</b>${label}</div>`;
  return `<section class="kpis" aria-label="the week in figures">
${box(fmt(s.vehiclesToBook), `vehicles on the work list<br>${now} book now · ${week} this week`, s.vehiclesToBook > 0)}
${box(`${fmt(s.vehiclesReporting)} / ${fmt(s.vehicles)}`, 'vehicles reporting')}
${box(fmt(s.engineHours), 'engine hours')}
${box(fmt(s.coldStarts), `cold starts (of ${fmt(s.engineRuns)} runs)`)}
${box(fmt(unusual), `gateways silent longer than usual<br>(${s.silentGateways.length} silent ≥ ${s.silentGatewayHours} h)`, unusual > 0)}
${box(`${f.new} / ${f.ongoing} / ${f.resolved}`, 'findings new / ongoing / resolved')}
</section>`;
}

/** How a planner's decision on the finding shows beside it. */
function statusNote(finding: WorkFinding): string {
  if (finding.status === 'acknowledged') return ' <span class="note">(acknowledged, not yet repaired)</span>';
  if (finding.status === 'deferred')
    return ` <span class="note">(deferred until ${e(finding.deferredUntil ?? '?')}${finding.deferredReason ? `: ${e(finding.deferredReason)}` : ''})</span>`;
  return '';
}

function findingLine(f: WorkFinding): string {
  const code = f.troubleCode ? ` <span class="note">(${e(relatedCodeLabel(f.troubleCode))})</span>` : '';
  const assumed = f.profileNote ? `<br><span class="note profile-note">${e(f.profileNote)}</span>` : '';
  return `<li data-finding-id="${e(f.findingId)}"><b>${e(kindLabel(f.kind))}</b> <span class="note">${e(f.severity)}</span>${code}${statusNote(f)}<br>${e(f.why)}${assumed}</li>`;
}

/** One row per vehicle: every finding, one combined list of checks, and the cautions beyond the general one. */
function workListRow(item: WorkItem): string {
  const label =
    (item.label ? `<br><span class="note">${e(item.label)}</span>` : '') +
    (item.depot ? `<br><span class="note">depot ${e(item.depot)}</span>` : '') +
    (item.defaultProfile ? '<br><span class="note">default profile: cap, glycol and thermostat assumed</span>' : '');
  const extra = item.cautions.slice(1);
  return `<tr data-finding-id="${e(item.findingId)}" data-vehicle-id="${e(item.vehicleId)}">
<td class="num">${item.rank}</td><td>${badge(item.priority)}</td>
<td class="nowrap"><a href="#vehicle-${e(item.vehicleId)}"><b>${e(item.vehicleId)}</b></a>${label}</td><td class="num">${item.riskScore}</td>
<td><ul class="findings">${item.findings.map(findingLine).join(' ')}</ul></td>
<td class="check"><ol class="checks">${item.checks.map((c) => `<li>${e(c)}</li>`).join(' ')}</ol>${extra.length ? `<p class="caution-line">${extra.map(e).join(' ')}</p>` : ''}</td>
<td class="nowrap">${e(item.since)}</td><td class="num">${pct(item.confidence)}</td></tr>`;
}

function workList(report: WeeklyReport): string {
  if (report.workList.length === 0)
    return '<p class="empty">Nothing to book: no unresolved findings at the end of the week.</p>';
  return `<div class="caution" role="note">${e(report.caution)}</div>
<table id="work-list-table"><thead><tr><th class="num">#</th><th>priority</th><th>vehicle</th><th class="num">risk</th><th>findings</th><th>what to check (one visit)</th><th>since</th><th class="num">confidence</th></tr></thead>
<tbody>${report.workList.map(workListRow).join('\n')}</tbody></table>`;
}

/** What the booking words, severities, risk and statuses mean. */
function legend(): string {
  const rows = Object.entries(PRIORITY_LEGEND)
    .map(([p, text]) => `<dt>${badge(p)}</dt><dd>${e(text)}</dd>`)
    .join('');
  const severities = Object.entries(SEVERITY_LEGEND)
    .map(([s, text]) => `<b>${e(s)}</b>: ${e(text)}`)
    .join('; ');
  return (
    `<aside id="legend" aria-label="legend"><h3>Legend</h3><dl class="legend">${rows}</dl>
<p class="note"><b>Severity</b> — ${severities}. <b>Risk</b> — ${e(RISK_LEGEND)} ${e(STATUS_LEGEND)} ` +
    'A related code is the standard trouble code that matches the finding, given as context: the vehicle did not necessarily report it.</p></aside>'
  );
}

function findingsTable(report: WeeklyReport): string {
  const rows = report.findings.byKindSeverity;
  if (rows.length === 0) return '<p class="empty">No findings this week.</p>';
  const resolved = report.findings.resolvedThisWeek
    .map(
      (x) =>
        `<li>${e(x.vehicleId)}: ${e(kindLabel(x.kind))} (${e(x.severity)}) resolved ${e(x.resolvedAt.slice(0, 10))}${x.reason ? ` — ${e(resolvedReasonLabel(x.reason) ?? '')}` : ''}</li>`,
    )
    .join('');
  return `<table id="findings-table"><thead><tr><th>finding</th><th>severity</th><th class="num">new</th><th class="num">ongoing</th><th class="num">resolved</th></tr></thead><tbody>
${rows.map((x) => `<tr><td>${e(kindLabel(x.kind))}</td><td>${e(x.severity)}</td><td class="num">${x.new}</td><td class="num">${x.ongoing}</td><td class="num">${x.resolved}</td></tr>`).join('\n')}
</tbody></table>${resolved ? `<p>Resolved this week:</p><ul>${resolved}</ul>` : ''}`;
}

function dataQuality(r: WeeklyReport): string {
  const s = r.summary;
  const silent =
    s.silentGateways.length === 0
      ? `<p class="empty">Every gateway sent data within ${s.silentGatewayHours} h of the report time.</p>`
      : `<table id="silent-table"><thead><tr><th>vehicle</th><th>last reading (UTC)</th><th class="num">silent for</th><th class="num">usual longest break</th><th>assessment</th></tr></thead><tbody>${s.silentGateways
          .map(
            (g) =>
              `<tr><td>${e(g.vehicleId)}${g.label ? ` <span class="note">${e(g.label)}</span>` : ''}</td><td>${g.lastReadingAt ? e(g.lastReadingAt.slice(0, 16).replace('T', ' ')) : 'none in 60 days'}</td>` +
              `<td class="num">${g.silentHours === null ? '—' : `${fmt(g.silentHours)} h`}</td><td class="num">${g.usualLongestBreakHours === null ? '—' : `${fmt(g.usualLongestBreakHours)} h`}</td>` +
              `<td>${g.unusual ? '<b>longer than usual: check the gateway or whether the vehicle is off the road</b>' : 'within its usual breaks (e.g. parked at weekends)'}</td></tr>`,
          )
          .join('')}</tbody></table>`;
  const dq = r.dataQuality;
  const sensors =
    dq.sensorFaults.length === 0
      ? '<p class="empty">No implausible coolant readings this week.</p>'
      : `<table id="sensor-table"><thead><tr><th>vehicle</th><th>runs with implausible readings, by kind</th><th>open sensor finding</th></tr></thead><tbody>${dq.sensorFaults
          .map(
            (x) =>
              `<tr><td>${e(x.vehicleId)}</td><td>${e(
                Object.entries(x.events)
                  .map(([k, n]) => `${sensorEventLabel(k)}: ${n}`)
                  .join(', ') || '—',
              )}</td><td>${x.openFinding ? e(x.openFinding) : '—'}</td></tr>`,
          )
          .join('')}</tbody></table>`;
  const gaps =
    dq.gaps.length === 0
      ? '<p class="empty">No vehicle lost clearly more of its running time to gaps than in the four weeks before.</p>'
      : `<table id="gaps-table"><thead><tr><th>vehicle</th><th class="num">days with data</th><th class="num">dropouts</th><th class="num">missing</th><th class="num">share of running time</th><th class="num">usual share</th></tr></thead><tbody>${dq.gaps
          .map(
            (g) =>
              `<tr><td>${e(g.vehicleId)}</td><td class="num">${g.daysWithData}</td><td class="num">${g.dropouts}</td><td class="num">${fmt(g.missingHours, 1)} h</td><td class="num">${pct(g.missingFraction)}</td><td class="num">${g.usualMissingFraction === null ? '—' : pct(g.usualMissingFraction)}</td></tr>`,
          )
          .join('')}</tbody></table>`;
  return `<h3>Silent gateways</h3>${silent}<h3>Coolant sensor</h3>${sensors}<h3>Gaps inside engine runs</h3>${gaps}`;
}

/**
 * The report as one self-contained HTML page: inline CSS and SVG charts, no scripts, no
 * external requests; prints on A4.
 */
export function renderReportHtml(r: WeeklyReport): string {
  const title = `Cooling-system maintenance report — ${r.fleet.name}, ${r.week.isoWeek}`;
  const charted = r.vehicles.length;
  const rest = r.workList.length - charted;
  return `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>${e(title)}</title><style>${REPORT_CSS}</style></head>
<body>
<header><h1>${e(title)}</h1>
<p class="sub">Week ${e(r.week.isoWeek)}: ${e(longDate(r.week.firstDay))} – ${e(longDate(r.week.lastDay))} (${e(r.fleet.timeZone)}) · data as of ${e(r.asOf.slice(0, 16).replace('T', ' '))} UTC · generated ${e(r.generatedAt.slice(0, 16).replace('T', ' '))} UTC</p>
<p class="sub" id="coverage">${e(r.coverage.statement)}</p></header>
${kpis(r)}
<section id="work-list"><h2>Work list for the shop</h2>
<p class="note">Vehicles in order of risk; book the red ones before their next duty. Each row says what the data shows and what to check.</p>
${workList(r)}
${legend()}</section>
<section id="vehicles"><h2>The evidence, vehicle by vehicle</h2>
${charted === 0 ? '<p class="empty">No vehicle at risk.</p>' : r.vehicles.map((v) => vehicleSectionHtml(v, r.fleet.timeZone, r.unit ?? 'C')).join('\n')}
${rest > 0 ? `<p class="note">${rest} more vehicle${rest > 1 ? 's' : ''} on the work list without charts here.</p>` : ''}</section>
<section id="findings"><h2>Findings this week</h2>
<p class="note">New: first evidence this week. Ongoing: earlier and not yet resolved. Resolved: closed this week (repair recorded, or the evidence stopped).</p>
${findingsTable(r)}</section>
<section id="data-quality"><h2>Data quality</h2>${dataQuality(r)}</section>
<footer><p>${e(r.caution)}</p>
<p>Warm-up curves are the gateway's coolant readings (SAE J1939 SPN 110 / OBD-II PID 0x05) after each cold start; the healthy range is the 10th–90th percentile of first-order (Newton) fits of the vehicle's own judged cold starts before the problem began. The warm-up target is the thermostat rating minus 11.1 °C (20 °F, California OBD-II thermostat monitor). Daily peaks are the highest plausible coolant reading per UTC day; the trend is Sen's slope over the last days, drawn through the median of the last five peaks; the boiling point is that of the coolant at cap pressure (IAPWS-IF97 with the glycol's elevation).</p></footer>
</body></html>
`;
}
