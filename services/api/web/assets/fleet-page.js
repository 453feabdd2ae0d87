import { api, ApiError, query } from './api.js';
import { day, h, priorityBadge, replace } from './dom.js';
import { unitParam } from './units.js';

const PAGE_SIZE = 50;
/** Rows per page the planner may choose (any 1–200 in the URL's `limit` works too). */
const PAGE_SIZES = [25, 50, 100, 200];
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

/**
 * The filter, sort and page as the URL holds them (so back, reload and links keep the view): the
 * page is the service's opaque `cursor` (none: the first page) and its number, for the words only.
 * The cursors of the pages before it ride in the history entry (`trail`), for "Previous".
 */
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
    cursor: p.get('cursor') ?? '',
    limit: Math.min(200, Math.max(1, Math.floor(Number(p.get('limit') ?? PAGE_SIZE)) || PAGE_SIZE)),
    page: Math.max(1, Math.floor(Number(p.get('page') ?? 1)) || 1),
  };
}

/** The history entry's cursors of the pages before this one ('' for the first page), if the planner paged here. */
function trailFromHistory(state) {
  const trail = history.state?.trail;
  return Array.isArray(trail) && trail.length === state.page - 1 && trail.every((c) => typeof c === 'string')
    ? trail
    : null;
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
  const trail = trailFromHistory(state);
  const { page: _page, ...request } = state;
  let data;
  try {
    data = await api(`/v1/fleet/vehicles${query({ ...request, unit: unitParam() })}`, { signal });
  } catch (err) {
    // A cursor the service no longer takes (an old link, a new release): start again at the first page.
    if (err instanceof ApiError && err.status === 400 && state.cursor) {
      const p = new URLSearchParams(location.search);
      p.delete('cursor');
      p.delete('page');
      return navigate(`/app/${p.size > 0 ? `?${p}` : ''}`, { replaceState: true });
    }
    throw err;
  }
  /** A new filter or sort starts at the first page; paging passes the cursor, its number and the trail. */
  const go = (change, paging = { cursor: '', page: 1, trail: [], focus: null }) => {
    const next = { ...state, ...change, cursor: paging.cursor, page: paging.page };
    const params = query({
      ...next,
      sort: next.sort === 'risk' ? '' : next.sort,
      order: next.order === 'desc' ? '' : next.order,
      page: next.page > 1 ? next.page : '',
      limit: next.limit === PAGE_SIZE ? '' : next.limit,
    });
    navigate(`/app/${params}`, { state: { trail: paging.trail, focus: paging.focus } });
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
                // A first click: most urgent first for priority (asc: book now first), highest risk first, A–Z, oldest first.
                order: active ? nextOrder : col.key === 'risk' ? 'desc' : 'asc',
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
        // Why, in a sentence: the most severe finding's (the service writes its figures in the chosen unit).
        v.findings[0] ? h('p', { class: 'why' }, v.findings[0].summary) : null,
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

  // The rows before this page: exact when the planner paged here (or on the first page), else unknown.
  const before = (state.page - 1) * state.limit;
  const from = data.vehicles.length === 0 ? 0 : before + 1;
  const to = before + data.vehicles.length;
  const hasPrevious = state.cursor !== '';
  const paging = h(
    'nav',
    { class: 'paging', 'aria-label': 'Pages' },
    h(
      'button',
      {
        type: 'button',
        id: 'prev-page',
        disabled: !hasPrevious,
        onclick: () =>
          trail
            ? go(
                {},
                {
                  cursor: trail[trail.length - 1],
                  page: state.page - 1,
                  trail: trail.slice(0, -1),
                  focus: 'prev-page',
                },
              )
            : go({}, { cursor: '', page: 1, trail: [], focus: 'prev-page' }),
      },
      hasPrevious && !trail ? '← First page' : '← Previous',
    ),
    h(
      'span',
      { id: 'page-info', role: 'status' },
      data.vehicles.length === 0
        ? `no vehicles on this page of ${data.total}`
        : `vehicles ${from}–${to} of ${data.total}`,
    ),
    h(
      'button',
      {
        type: 'button',
        id: 'next-page',
        disabled: data.nextCursor === null,
        onclick: () =>
          go(
            {},
            {
              cursor: data.nextCursor,
              page: state.page + 1,
              trail: [...(trail ?? []), state.cursor],
              focus: 'next-page',
            },
          ),
      },
      'Next →',
    ),
    h(
      'div',
      { class: 'field inline' },
      h('label', { for: 'page-size' }, 'Rows per page'),
      h(
        'select',
        { id: 'page-size', onchange: (event) => go({ limit: Number(event.target.value) }) },
        [...new Set([...PAGE_SIZES, state.limit])]
          .sort((a, b) => a - b)
          .map((n) => h('option', { value: n, selected: n === state.limit }, n)),
      ),
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
  // Keyboard paging keeps its place: the button pressed keeps the focus (or the other one, at either end).
  const focus = history.state?.focus;
  if (focus === 'next-page' || focus === 'prev-page') {
    const wanted = document.getElementById(focus);
    const other = document.getElementById(focus === 'next-page' ? 'prev-page' : 'next-page');
    (wanted && !wanted.disabled ? wanted : other)?.focus();
  }
}
