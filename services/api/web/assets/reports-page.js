import { api, query } from './api.js';
import { dayTime, h, replace } from './dom.js';
import { degree, unitParam } from './units.js';

/** The ISO week (YYYY-Www) of a time, UTC. */
function isoWeek(ms) {
  const d = new Date(ms);
  const day = (d.getUTCDay() + 6) % 7;
  d.setUTCDate(d.getUTCDate() - day + 3);
  const firstThursday = new Date(Date.UTC(d.getUTCFullYear(), 0, 4));
  const week = 1 + Math.round(((d - firstThursday) / 86_400_000 - 3 + ((firstThursday.getUTCDay() + 6) % 7)) / 7);
  return `${d.getUTCFullYear()}-W${String(week).padStart(2, '0')}`;
}

export async function renderReportsPage({ view, signal, session }) {
  document.title = 'Weekly reports — thermocline';
  const { reports } = await api(
    `/v1/reports/weekly/archive${query({ fleet: session.admin ? session.fleetId : undefined })}`,
    { signal },
  );
  const link = (week, format, text) =>
    h(
      'a',
      {
        href: `/v1/reports/weekly${query({ week, format, fleet: session.admin ? session.fleetId : undefined, unit: unitParam() })}`,
        target: format === 'html' ? '_blank' : undefined,
        rel: 'noopener',
      },
      text,
    );
  const week = h('input', {
    id: 'report-week',
    type: 'text',
    required: true,
    pattern: '\\d{4}-W\\d{2}',
    value: isoWeek(Date.now() - 7 * 86_400_000),
    'aria-describedby': 'report-week-help',
  });
  const result = h('p', { role: 'status', id: 'report-result' });
  const build = h(
    'form',
    { class: 'card', id: 'build-report' },
    h('h2', {}, 'Build a report now'),
    h(
      'div',
      { class: 'row' },
      h('div', { class: 'field' }, h('label', { for: 'report-week' }, 'ISO week'), week),
      h('div', { class: 'field actions' }, h('button', { type: 'submit' }, 'Build')),
    ),
    h(
      'p',
      { class: 'help', id: 'report-week-help' },
      'e.g. 2026-W48. A week that has not ended is built as far as the data goes; the archived copy is replaced.',
    ),
    result,
  );
  build.addEventListener('submit', async (event) => {
    event.preventDefault();
    result.textContent = `Building ${week.value}…`;
    try {
      await api(
        `/v1/reports/weekly${query({ week: week.value, format: 'json', refresh: 'true', fleet: session.admin ? session.fleetId : undefined })}`,
      );
      await renderReportsPage({ view, signal, session });
      document.getElementById('report-result').textContent = `Report ${week.value} built and archived.`;
    } catch (err) {
      result.textContent = err.message;
    }
  });
  replace(
    view,
    h('h1', {}, 'Weekly reports'),
    h(
      'p',
      { class: 'sub', id: 'reports-unit' },
      `Reports open with temperatures in ${degree()} (the choice at the top).`,
    ),
    reports.length === 0
      ? h('p', { class: 'empty' }, 'No report archived yet.')
      : h(
          'table',
          { class: 'list', id: 'reports-table' },
          h('caption', { class: 'sr-only' }, 'Archived weekly reports, newest first'),
          h(
            'thead',
            {},
            h(
              'tr',
              {},
              ['Week', 'Built', 'Open as'].map((t) => h('th', { scope: 'col' }, t)),
            ),
          ),
          h(
            'tbody',
            {},
            reports.map((r) =>
              h(
                'tr',
                { dataset: { week: r.isoWeek } },
                h('td', {}, r.isoWeek),
                h('td', {}, dayTime(r.generatedAt)),
                h(
                  'td',
                  { class: 'links' },
                  link(r.isoWeek, 'html', 'HTML page'),
                  ' · ',
                  link(r.isoWeek, 'csv', 'CSV work list'),
                  ' · ',
                  link(r.isoWeek, 'json', 'JSON'),
                ),
              ),
            ),
          ),
        ),
    build,
  );
}
