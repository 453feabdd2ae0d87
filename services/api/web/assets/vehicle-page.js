import { api, ApiError, query } from './api.js';
import { figure, loadCharting, peaksChart, readingsChart, readingsRequest, warmupChart } from './charts.js';
import { day, dayTime, h, priorityBadge, replace, severityBadge, statusBadge } from './dom.js';
import { degree, unitParam } from './units.js';
import { profileSection } from './vehicle-profile.js';

const RANGES = [
  ['1 day', 1],
  ['7 days', 7],
  ['28 days', 28],
  ['56 days', 56],
];
const EVIDENCE_ROWS = 12;

function notFound(view, vehicleId) {
  document.title = 'Not found — thermocline';
  replace(
    view,
    h(
      'div',
      { class: 'card', id: 'not-found' },
      h('h1', {}, 'Vehicle not found'),
      h('p', {}, `There is no vehicle '${vehicleId}' in this fleet.`),
      h('p', {}, h('a', { href: '/app/', 'data-link': true }, '← Back to the fleet')),
    ),
  );
}

function evidenceTable(f) {
  if (f.evidence.length === 0) return h('p', { class: 'sub' }, 'No itemised evidence.');
  const shown = f.evidence.slice(-EVIDENCE_ROWS).reverse();
  return h(
    'details',
    { class: 'evidence' },
    h(
      'summary',
      {},
      `Evidence (${f.evidence.length} ${f.evidence.length === 1 ? 'item' : 'items'}${f.evidence.length > EVIDENCE_ROWS ? `, latest ${EVIDENCE_ROWS} shown` : ''})`,
    ),
    h(
      'table',
      { class: 'list compact' },
      h(
        'thead',
        {},
        h(
          'tr',
          {},
          ['When', 'Of', 'Measure', 'Value', 'Expected', 'z'].map((t) => h('th', { scope: 'col' }, t)),
        ),
      ),
      h(
        'tbody',
        {},
        shown.map((e) =>
          h(
            'tr',
            {},
            h('td', {}, dayTime(e.at)),
            h('td', {}, e.scope === 'run' ? 'engine run' : 'day'),
            h('td', {}, e.metric),
            h('td', { class: 'num' }, Math.round(e.value * 100) / 100),
            h('td', { class: 'num' }, e.expected === null ? '—' : Math.round(e.expected * 100) / 100),
            h('td', { class: 'num' }, e.z === null ? '—' : Math.round(e.z * 10) / 10),
          ),
        ),
      ),
    ),
  );
}

function findingCard(f, labels, act) {
  const id = `finding-${f.id}`;
  const actions = h('div', { class: 'actions' });
  if (f.status === 'open')
    actions.append(h('button', { type: 'button', class: 'ack', onclick: () => act(f, 'acknowledge') }, 'Acknowledge'));
  if (f.status === 'acknowledged' || f.status === 'deferred')
    actions.append(
      h(
        'button',
        { type: 'button', class: 'undo quiet', onclick: () => act(f, 'reopen') },
        f.status === 'deferred' ? 'Undo deferral' : 'Undo acknowledgement',
      ),
    );
  if (f.status !== 'resolved') {
    const until = h('input', {
      type: 'date',
      id: `${id}-until`,
      required: true,
      min: new Date(Date.now() + 86_400_000).toISOString().slice(0, 10),
    });
    const reason = h('input', {
      type: 'text',
      id: `${id}-reason`,
      required: true,
      maxlength: 500,
      placeholder: 'e.g. booked with the next service',
    });
    const form = h(
      'form',
      { class: 'defer' },
      h('div', { class: 'field' }, h('label', { for: `${id}-until` }, 'Defer until'), until),
      h('div', { class: 'field grow' }, h('label', { for: `${id}-reason` }, 'Reason'), reason),
      h('div', { class: 'field actions' }, h('button', { type: 'submit', class: 'quiet' }, 'Defer')),
    );
    form.addEventListener('submit', (event) => {
      event.preventDefault();
      act(f, 'defer', { until: until.value, reason: reason.value });
    });
    actions.append(h('details', { class: 'defer-box' }, h('summary', {}, 'Defer…'), form));
  }
  return h(
    'article',
    {
      class: `finding sev-border-${f.severity}${f.status === 'resolved' ? ' resolved' : ''}`,
      id,
      dataset: { findingId: f.id, status: f.status },
    },
    h('h3', {}, labels[f.kind] ?? f.kind, ' ', severityBadge(f.severity), ' ', statusBadge(f.status, f.deferredUntil)),
    h('p', { class: 'summary' }, f.summary),
    h(
      'dl',
      { class: 'facts' },
      h('dt', {}, 'Since'),
      h('dd', {}, day(f.firstSeen)),
      h('dt', {}, 'Last evidence'),
      h('dd', {}, day(f.lastSeen)),
      h('dt', {}, 'Confidence'),
      h('dd', {}, `${Math.round(f.confidence * 100)} %`),
      f.troubleCode ? [h('dt', {}, 'Related code'), h('dd', {}, f.troubleCode)] : null,
      f.status === 'deferred'
        ? [h('dt', {}, 'Deferred'), h('dd', {}, `until ${day(f.deferredUntil)}: ${f.deferredReason ?? ''}`)]
        : null,
      f.status === 'resolved'
        ? [
            h('dt', {}, 'Resolved'),
            h(
              'dd',
              {},
              `${day(f.resolvedAt)} (${(f.resolvedReason ?? '').replace('service-event:', 'repair: ').replace(/-/g, ' ')})`,
            ),
          ]
        : null,
    ),
    h('p', { class: 'check' }, h('strong', {}, 'Recommended check: '), f.recommendedCheck),
    evidenceTable(f),
    actions,
  );
}

/** Any range of days (UTC), up to the service's limit. */
function rangeForm(show) {
  const from = h('input', { type: 'date', id: 'range-from', required: true });
  const to = h('input', { type: 'date', id: 'range-to', required: true });
  const form = h(
    'form',
    { class: 'range-form', id: 'range-form' },
    h('div', { class: 'field' }, h('label', { for: 'range-from' }, 'From (UTC)'), from),
    h('div', { class: 'field' }, h('label', { for: 'range-to' }, 'To, inclusive'), to),
    h('div', { class: 'field actions' }, h('button', { type: 'submit', class: 'quiet' }, 'Show range')),
  );
  form.addEventListener('submit', (event) => {
    event.preventDefault();
    void show(Date.parse(`${from.value}T00:00:00Z`), Date.parse(`${to.value}T00:00:00Z`) + 86_400_000).catch((err) => {
      document.getElementById('readings-status').textContent = err.message;
    });
  });
  return form;
}

function serviceSection(vehicleId, summary, events, onRecorded) {
  const kinds = summary.serviceEventKinds;
  const labels = summary.kindLabels;
  const kind = h(
    'select',
    { id: 'event-kind', required: true },
    kinds.map((k) => h('option', { value: k.kind }, k.kind.replace(/-/g, ' '))),
  );
  const resolves = h('p', { class: 'help', id: 'event-kind-help', 'aria-live': 'polite' });
  const showResolves = () => {
    const k = kinds.find((x) => x.kind === kind.value);
    resolves.textContent =
      k && k.resolves.length > 0
        ? `Resolves findings of these kinds that began before it: ${k.resolves.map((r) => labels[r] ?? r).join(', ')}.`
        : 'Resolves nothing: a fault the inspection missed keeps showing.';
  };
  kind.addEventListener('change', showResolves);
  showResolves();
  const local = new Date(Date.now() - new Date().getTimezoneOffset() * 60_000).toISOString().slice(0, 16);
  const at = h('input', { type: 'datetime-local', id: 'event-at', required: true, value: local, max: local });
  const notes = h('textarea', { id: 'event-notes', rows: 2, maxlength: 2000 });
  const result = h('p', { role: 'status', id: 'event-result' });
  const form = h(
    'form',
    { class: 'card', id: 'service-event-form' },
    h('h3', {}, 'Record a repair or an inspection'),
    h(
      'div',
      { class: 'row' },
      h('div', { class: 'field' }, h('label', { for: 'event-kind' }, 'Work done'), kind),
      h('div', { class: 'field' }, h('label', { for: 'event-at' }, 'When (your local time)'), at),
    ),
    resolves,
    h('div', { class: 'field' }, h('label', { for: 'event-notes' }, 'Notes (optional)'), notes),
    h('button', { type: 'submit' }, 'Record'),
    result,
  );
  form.addEventListener('submit', async (event) => {
    event.preventDefault();
    try {
      const reply = await api(`/v1/vehicles/${encodeURIComponent(vehicleId)}/service-events`, {
        method: 'POST',
        body: {
          kind: kind.value,
          at: new Date(at.value).toISOString(),
          ...(notes.value.trim() ? { notes: notes.value.trim() } : {}),
        },
      });
      await onRecorded(
        `Recorded. ${reply.resolvedFindings.length} ${reply.resolvedFindings.length === 1 ? 'finding' : 'findings'} resolved.`,
      );
    } catch (err) {
      result.textContent = err.message;
    }
  });
  const history =
    events.length === 0
      ? h('p', { class: 'sub', id: 'no-events' }, 'No repairs recorded yet.')
      : h(
          'table',
          { class: 'list compact', id: 'service-history' },
          h(
            'thead',
            {},
            h(
              'tr',
              {},
              ['When', 'Work done', 'Findings resolved', 'Notes'].map((t) => h('th', { scope: 'col' }, t)),
            ),
          ),
          h(
            'tbody',
            {},
            events.map((e) =>
              h(
                'tr',
                {},
                h('td', {}, dayTime(e.at)),
                h('td', {}, e.kind.replace(/-/g, ' ')),
                h('td', { class: 'num' }, e.resolvedFindings.length),
                h('td', {}, e.notes ?? ''),
              ),
            ),
          ),
        );
  return h(
    'section',
    { 'aria-labelledby': 'service-heading' },
    h('h2', { id: 'service-heading' }, 'Repairs and inspections'),
    form,
    h('h3', {}, 'History'),
    history,
  );
}

export async function renderVehiclePage(ctx, vehicleId) {
  const { view, signal, session } = ctx;
  const base = `/v1/vehicles/${encodeURIComponent(vehicleId)}`;
  let vehicle, findings, summary, events;
  // The readings are asked for at once too: on a server with a connection pool all five run side by side.
  const firstReadings = readingsRequest(vehicleId);
  firstReadings.catch(() => {});
  const charting = loadCharting();
  charting.catch(() => {});
  try {
    // Findings and charts in the planner's unit; the profile stays in °C, the unit its form writes.
    const unit = query({ unit: unitParam() });
    [vehicle, { findings }, summary, { events }] = await Promise.all([
      api(base, { signal }),
      api(`${base}/findings${unit}`, { signal }),
      api(`${base}/summary${unit}`, { signal }),
      api(`${base}/service-events?limit=50`, { signal }),
    ]);
  } catch (err) {
    // Another fleet's vehicle answers 403 in the API; the page says "not found", as for an unknown one.
    if (err instanceof ApiError && (err.status === 404 || err.status === 403)) return notFound(view, vehicleId);
    throw err;
  }
  document.title = `${vehicleId} — thermocline`;
  const reload = async (message) => {
    await renderVehiclePage(ctx, vehicleId);
    const status = document.getElementById('page-status');
    if (status && message) status.textContent = message;
  };
  const act = async (f, action, body) => {
    try {
      await api(`/v1/findings/${encodeURIComponent(f.id)}/${action}`, { method: 'POST', ...(body ? { body } : {}) });
      const words = { acknowledge: 'acknowledged', reopen: 'reopened', defer: 'deferred' };
      await reload(`Finding ${summary.kindLabels[f.kind] ?? f.kind} ${words[action]}.`);
      document.getElementById(`finding-${f.id}`)?.querySelector('h3')?.setAttribute('tabindex', '-1');
    } catch (err) {
      document.getElementById('page-status').textContent = err.message;
    }
  };
  const unresolved = findings.filter((f) => f.status !== 'resolved');
  const resolved = findings.filter((f) => f.status === 'resolved');
  const worst = unresolved.reduce(
    (w, f) =>
      ['critical', 'warning', 'advisory'].indexOf(f.severity) < ['critical', 'warning', 'advisory'].indexOf(w)
        ? f.severity
        : w,
    'advisory',
  );

  const warm = figure(
    'chart-warmup',
    'Cold starts against the healthy band.',
    summary.warmup.band.length > 0
      ? `The shaded band holds 80 % of this vehicle's healthy cold starts before ${summary.warmup.baselineUntil}; the lines are its latest cold starts.`
      : 'Too few healthy cold starts for a band yet; the lines are the latest cold starts.',
  );
  const peaks = figure(
    'chart-peaks',
    'Daily peaks against ambient.',
    `Daily peak coolant and maximum air temperature, the trend of the peaks and the boiling point at cap pressure (${summary.peaks.boilingPointC} ${degree()}).`,
  );
  const readings = figure(
    'chart-readings',
    'Readings.',
    'Coolant minimum to maximum (shaded) and mean per time bucket, with ambient. Wheel or drag to zoom; a zoom loads finer data.',
  );
  const readingsStatus = h('p', { class: 'sub', role: 'status', id: 'readings-status' });

  replace(
    view,
    h('p', { class: 'crumbs' }, h('a', { href: '/app/', 'data-link': true }, '← Fleet')),
    h(
      'header',
      { class: 'vehicle-head' },
      h('h1', {}, vehicleId, vehicle.label ? h('span', { class: 'sub' }, ` ${vehicle.label}`) : null),
      h(
        'div',
        { class: 'head-facts' },
        unresolved.length > 0 ? priorityBadge(worst) : h('span', { class: 'status st-res' }, 'nothing to book'),
        h('span', {}, `${unresolved.length} unresolved ${unresolved.length === 1 ? 'finding' : 'findings'}`),
        h('span', {}, `depot ${vehicle.depot ?? '—'}`),
        h('span', {}, `analysed up to ${dayTime(summary.analysedUpTo)}`),
      ),
    ),
    h('p', { role: 'status', id: 'page-status', class: 'page-status' }),
    unresolved.length > 0
      ? h(
          'aside',
          { class: 'cautions', 'aria-label': 'Cautions' },
          h('h2', {}, 'Before any work on the vehicle'),
          h(
            'ul',
            {},
            summary.cautions.map((c) => h('li', {}, c)),
          ),
          h('p', { class: 'sub' }, 'This tool advises from coolant-temperature data; a qualified technician decides.'),
        )
      : null,
    h(
      'section',
      { 'aria-labelledby': 'findings-heading' },
      h('h2', { id: 'findings-heading' }, 'Findings'),
      unresolved.length === 0
        ? h('p', { class: 'sub' }, 'No unresolved findings.')
        : unresolved.map((f) => findingCard(f, summary.kindLabels, act)),
      resolved.length > 0
        ? h(
            'details',
            { class: 'resolved-list' },
            h('summary', {}, `${resolved.length} resolved ${resolved.length === 1 ? 'finding' : 'findings'}`),
            resolved.map((f) => findingCard(f, summary.kindLabels, act)),
          )
        : null,
    ),
    h(
      'section',
      { 'aria-labelledby': 'charts-heading', class: 'charts' },
      h('h2', { id: 'charts-heading' }, 'Charts'),
      h('div', { class: 'chart-grid' }, warm.node, peaks.node),
      h(
        'div',
        { class: 'range-bar', role: 'group', 'aria-label': 'Readings range and zoom' },
        RANGES.map(([label, days]) =>
          h(
            'button',
            {
              type: 'button',
              class: 'quiet',
              dataset: { days },
              onclick: () =>
                void rc.load(
                  Date.parse(summary.analysedUpTo ?? new Date().toISOString()) + 1 - days * 86_400_000,
                  Date.parse(summary.analysedUpTo ?? new Date().toISOString()) + 1,
                ),
            },
            `last ${label}`,
          ),
        ),
        h('button', { type: 'button', class: 'quiet', id: 'zoom-in', onclick: () => rc.zoom(0.5) }, 'Zoom in'),
        h('button', { type: 'button', class: 'quiet', id: 'zoom-out', onclick: () => rc.zoom(2) }, 'Zoom out'),
        rangeForm((from, to) => rc.load(from, to)),
      ),
      readings.node,
      readingsStatus,
    ),
    serviceSection(vehicleId, summary, events, reload),
    profileSection(vehicle, session, reload),
  );

  // The page is drawn; the charts follow as soon as the library is there.
  await charting;
  if (signal.aborted) return;
  warmupChart(warm.el, summary.warmup);
  peaksChart(peaks.el, summary.peaks);
  const rc = readingsChart(readings.el, vehicleId, readingsStatus);
  await rc.load(undefined, undefined, firstReadings);
}
