import { api, query } from './api.js';
import { day, h, priorityBadge, replace } from './dom.js';

const PAGE_SIZE = 50;
const SEVERITIES = [
  ['critical', 'book now (critical)'],
  ['warning', 'book this week (warning)'],
  ['advisory', 'at next service (advisory)'],
];
const MARKS = [
  ['unmarked', 'not yet acknowledged or deferred'],
  ['acknowledged', 'acknowledged'],
  ['deferred', 'deferred'],
  ['marked', 'acknowledged or deferred'],
];
const COLUMNS = [
  { key: 'priority', label: 'Priority' },
  { key: 'vehicle', label: 'Vehicle' },
  { key: 'risk', label: 'Risk' },
  { key: null, label: 'Open findings' },
  { key: 'since', label: 'Since' },
  { key: null, label: 'Marks' },
  { key: 'depot', label: 'Depot' },
];

/** The filter, sort and page as the URL holds them (so back, reload and links keep the view). */
function stateFromUrl() {
  const p = new URLSearchParams(location.search);
  return {
    q: p.get('q') ?? '',
    severity: p.get('severity') ?? '',
    kind: p.get('kind') ?? '',
    depot: p.get('depot') ?? '',
    mark: p.get('mark') ?? '',
    sort: p.get('sort') ?? 'risk',
    order: p.get('order') ?? 'desc',
    offset: Math.max(0, Number(p.get('offset') ?? 0) || 0),
  };
}

function select(id, label, options, value) {
  return h(
    'div',
    { class: 'field' },
    h('label', { for: id }, label),
    h(
      'select',
      { id, name: id },
      h('option', { value: '' }, 'any'),
      options.map(([v, text]) => h('option', { value: v, selected: v === value }, text)),
    ),
  );
}

export async function renderFleetPage({ view, signal, navigate }) {
  document.title = 'Fleet — thermocline';
  const state = stateFromUrl();
  const data = await api(`/v1/fleet/vehicles${query({ ...state, limit: PAGE_SIZE })}`, { signal });
  const go = (change) => {
    const next = { ...state, ...change };
    const params = query({
      ...next,
      sort: next.sort === 'risk' ? '' : next.sort,
      order: next.order === 'desc' ? '' : next.order,
      offset: next.offset || '',
    });
    navigate(`/app/${params}`);
  };

  const c = data.counts;
  const counts = h(
    'section',
    { class: 'counts', 'aria-label': 'Fleet counts' },
    h(
      'div',
      { class: 'count' },
      h('span', { class: 'n', id: 'count-at-risk' }, c.atRisk),
      h('span', { class: 't' }, 'vehicles at risk'),
    ),
    h(
      'div',
      { class: 'count' },
      h('span', { class: 'n', id: 'count-reporting' }, `${c.reporting} / ${c.vehicles}`),
      h('span', { class: 't' }, `vehicles reporting (data within ${c.silentGatewayHours} h)`),
    ),
    h(
      'div',
      { class: `count${c.silentGateways > 0 ? ' attention' : ''}` },
      h('span', { class: 'n', id: 'count-silent' }, c.silentGateways),
      h('span', { class: 't' }, 'silent gateways'),
    ),
    h(
      'div',
      { class: 'count' },
      h('span', { class: 'n', id: 'count-new' }, c.newThisWeek),
      h('span', { class: 't' }, 'new this week (onset in the last 7 days)'),
    ),
  );

  const search = h('input', {
    id: 'search',
    name: 'q',
    type: 'search',
    value: state.q,
    placeholder: 'e.g. QM-07 or a plate',
    autocomplete: 'off',
  });
  const filters = h(
    'form',
    { class: 'filters', id: 'filters', role: 'search', 'aria-label': 'Filter the vehicles' },
    h('div', { class: 'field grow' }, h('label', { for: 'search' }, 'Search vehicle id or label'), search),
    select('severity', 'Priority', SEVERITIES, state.severity),
    select(
      'kind',
      'Finding kind',
      data.kinds.map((k) => [k.kind, k.label]),
      state.kind,
    ),
    select(
      'depot',
      'Depot',
      data.depots.map((d) => [d, d]),
      state.depot,
    ),
    select('mark', 'Acknowledged', MARKS, state.mark),
    h(
      'div',
      { class: 'field actions' },
      h('button', { type: 'submit' }, 'Apply'),
      h('button', { type: 'button', class: 'quiet', id: 'clear-filters', onclick: () => navigate('/app/') }, 'Clear'),
    ),
  );
  filters.addEventListener('submit', (event) => {
    event.preventDefault();
    const f = new FormData(filters);
    go({
      q: String(f.get('q') ?? '').trim(),
      severity: f.get('severity'),
      kind: f.get('kind'),
      depot: f.get('depot'),
      mark: f.get('mark'),
      offset: 0,
    });
  });
  // Choosing from a list applies it at once; the search waits for Enter or Apply.
  for (const el of filters.querySelectorAll('select')) el.addEventListener('change', () => filters.requestSubmit());

  const header = h(
    'tr',
    {},
    COLUMNS.map((col) => {
      if (!col.key) return h('th', { scope: 'col' }, col.label);
      const active = state.sort === col.key;
      const nextOrder = active && state.order === 'desc' ? 'asc' : 'desc';
      return h(
        'th',
        { scope: 'col', 'aria-sort': active ? (state.order === 'desc' ? 'descending' : 'ascending') : 'none' },
        h(
          'button',
          {
            type: 'button',
            class: 'sort',
            dataset: { sort: col.key },
            onclick: () =>
              go({
                sort: col.key,
                order: active
                  ? nextOrder
                  : col.key === 'vehicle' || col.key === 'depot' || col.key === 'since'
                    ? 'asc'
                    : 'desc',
                offset: 0,
              }),
          },
          col.label,
          h('span', { 'aria-hidden': 'true', class: 'arrow' }, active ? (state.order === 'desc' ? ' ▼' : ' ▲') : ' ↕'),
        ),
      );
    }),
  );
  const rows = data.vehicles.map((v) =>
    h(
      'tr',
      { dataset: { vehicleId: v.vehicleId } },
      h('td', {}, priorityBadge(v.maxSeverity)),
      h(
        'td',
        {},
        h(
          'a',
          { href: `/app/vehicles/${encodeURIComponent(v.vehicleId)}`, 'data-link': true, class: 'vehicle-link' },
          v.vehicleId,
        ),
        v.label ? h('div', { class: 'sub' }, v.label) : null,
      ),
      h('td', { class: 'num' }, Math.round(v.riskScore)),
      h(
        'td',
        {},
        h(
          'ul',
          { class: 'tags' },
          v.findings.map((f) =>
            h(
              'li',
              { class: `tag sev-${f.severity}` },
              f.label,
              f.status !== 'open'
                ? h('span', { class: 'tag-status' }, f.status === 'acknowledged' ? ' ✓' : ' ⏸')
                : null,
            ),
          ),
        ),
      ),
      h('td', {}, day(v.since)),
      h(
        'td',
        {},
        h(
          'div',
          { class: 'marks' },
          v.acknowledged > 0 ? h('span', { class: 'status st-ack' }, `✓ ${v.acknowledged} acknowledged`) : null,
          v.deferred > 0 ? h('span', { class: 'status st-def' }, `⏸ ${v.deferred} deferred`) : null,
          v.acknowledged + v.deferred === 0 ? h('span', { class: 'sub' }, 'not yet seen') : null,
        ),
      ),
      h('td', {}, v.depot ?? '—'),
    ),
  );

  const from = data.total === 0 ? 0 : data.offset + 1;
  const to = data.offset + data.vehicles.length;
  const paging = h(
    'nav',
    { class: 'paging', 'aria-label': 'Pages' },
    h(
      'button',
      {
        type: 'button',
        id: 'prev-page',
        disabled: data.offset === 0,
        onclick: () => go({ offset: Math.max(0, data.offset - PAGE_SIZE) }),
      },
      '← Previous',
    ),
    h('span', { id: 'page-info', role: 'status' }, `vehicles ${from}–${to} of ${data.total}`),
    h(
      'button',
      {
        type: 'button',
        id: 'next-page',
        disabled: to >= data.total,
        onclick: () => go({ offset: data.offset + PAGE_SIZE }),
      },
      'Next →',
    ),
  );

  replace(
    view,
    h('h1', {}, 'Vehicles at risk'),
    counts,
    filters,
    data.vehicles.length === 0
      ? h(
          'p',
          { class: 'empty', id: 'no-rows' },
          data.total === 0 && !state.q && !state.severity && !state.kind && !state.depot && !state.mark
            ? 'No vehicle has an unresolved finding.'
            : 'No vehicle matches the filter.',
        )
      : h(
          'div',
          { class: 'table-wrap' },
          h(
            'table',
            { id: 'fleet-table', class: 'list' },
            h('caption', { class: 'sr-only' }, 'Vehicles at risk, one row per vehicle; column headers sort'),
            h('thead', {}, header),
            h('tbody', {}, rows),
          ),
        ),
    paging,
  );
}
