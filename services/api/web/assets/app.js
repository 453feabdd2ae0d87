import { api, ApiError, hooks, setCsrfToken } from './api.js';
import { h, replace } from './dom.js';
import { renderFleetPage } from './fleet-page.js';
import { renderReportsPage } from './reports-page.js';
import { renderVehiclePage } from './vehicle-page.js';
import { setTemperatureUnit, temperatureUnit } from './units.js';

const view = document.getElementById('view');
const nav = document.getElementById('nav');
const who = document.getElementById('who');
/** The signed-in session (GET /app/session), or null. */
let session = null;
/** Aborts the requests of the page being left. */
let pageAbort = new AbortController();

function setSession(s) {
  session = s;
  setCsrfToken(s?.csrfToken ?? null);
  nav.hidden = !s || !s.fleetId;
  who.hidden = !s;
  document.getElementById('fleet-name').textContent = s
    ? `${s.fleetName ?? s.fleetId ?? 'no fleet chosen'}${s.admin ? ' (admin)' : ''}`
    : '';
}

/** Goes to `path` in the page (no reload); `state` rides along in the history entry (the fleet page's trail of cursors). */
export function navigate(path, { replaceState = false, state = null } = {}) {
  if (replaceState) history.replaceState(state, '', path);
  else history.pushState(state, '', path);
  void route();
}

// °C or °F for every page, remembered by the browser; a change redraws the page in the new unit.
const unitChoice = document.getElementById('unit-choice');
unitChoice.value = temperatureUnit();
unitChoice.addEventListener('change', () => {
  setTemperatureUnit(unitChoice.value);
  void route();
});

/** Same-page links: no reload, the history entry changes. */
document.addEventListener('click', (event) => {
  const a = event.target instanceof Element ? event.target.closest('a[data-link]') : null;
  if (!a || event.defaultPrevented || event.button !== 0 || event.metaKey || event.ctrlKey || event.shiftKey) return;
  event.preventDefault();
  navigate(a.getAttribute('href'));
});
window.addEventListener('popstate', () => void route());

hooks.onSignedOut = () => {
  setSession(null);
  renderSignIn('Your session has ended (signed out elsewhere, expired, or the key was revoked). Sign in again.');
};

document.getElementById('sign-out').addEventListener('click', async () => {
  try {
    await api('/app/session', { method: 'DELETE' });
  } catch (err) {
    if (!(err instanceof ApiError) || err.status !== 401) throw err;
  }
  setSession(null);
  history.replaceState(null, '', '/app/');
  renderSignIn('You are signed out.');
});

function renderSignIn(message) {
  document.title = 'Sign in — thermocline';
  const error = h('p', { class: 'error', role: 'alert', id: 'sign-in-error' });
  const input = h('input', {
    id: 'api-key',
    name: 'key',
    type: 'password',
    autocomplete: 'off',
    required: true,
    spellcheck: 'false',
    'aria-describedby': 'key-help',
  });
  const form = h(
    'form',
    { class: 'card sign-in', id: 'sign-in-form' },
    h('h1', {}, 'Sign in'),
    message ? h('p', { class: 'note', role: 'status' }, message) : null,
    h('label', { for: 'api-key' }, 'API key'),
    input,
    h(
      'p',
      { id: 'key-help', class: 'help' },
      'A key with the read scope (planners) or an admin key. Gateway keys (ingest only) cannot sign in. The key is checked once; the browser then keeps only a session.',
    ),
    h('button', { type: 'submit' }, 'Sign in'),
    error,
  );
  form.addEventListener('submit', async (event) => {
    event.preventDefault();
    error.textContent = '';
    try {
      setSession(await api('/app/session', { method: 'POST', body: { key: input.value } }));
      input.value = '';
      const next = location.pathname.startsWith('/app/sign-in') ? '/app/' : location.pathname + location.search;
      navigate(next, { replaceState: true });
    } catch (err) {
      error.textContent = err.message;
      input.focus();
    }
  });
  replace(view, form);
  input.focus();
}

async function renderFleetChoice() {
  document.title = 'Choose a fleet — thermocline';
  const { fleets } = await api('/app/fleets');
  const select = h(
    'select',
    { id: 'fleet-choice', required: true },
    fleets.map((f) => h('option', { value: f.fleetId }, `${f.name} (${f.fleetId})`)),
  );
  const error = h('p', { class: 'error', role: 'alert' });
  const form = h(
    'form',
    { class: 'card sign-in', id: 'fleet-form' },
    h('h1', {}, 'Choose a fleet'),
    h(
      'p',
      { class: 'help' },
      'An admin key sees every fleet; the web view shows one at a time, exactly as a key of that fleet would see it.',
    ),
    h('label', { for: 'fleet-choice' }, 'Fleet'),
    select,
    h('button', { type: 'submit' }, 'Open the fleet'),
    error,
  );
  form.addEventListener('submit', async (event) => {
    event.preventDefault();
    try {
      setSession(await api('/app/session/fleet', { method: 'PUT', body: { fleetId: select.value } }));
      void route();
    } catch (err) {
      error.textContent = err.message;
    }
  });
  replace(view, form);
  select.focus();
}

function markNav(name) {
  for (const a of nav.querySelectorAll('a')) {
    if (a.dataset.nav === name) a.setAttribute('aria-current', 'page');
    else a.removeAttribute('aria-current');
  }
}

async function route() {
  pageAbort.abort();
  pageAbort = new AbortController();
  const { signal } = pageAbort;
  if (!session) {
    try {
      setSession(await api('/app/session'));
    } catch (err) {
      if (err instanceof ApiError && err.status === 401) return renderSignIn();
      throw err;
    }
  }
  if (session.admin && !session.fleetId) return renderFleetChoice();
  const path = location.pathname;
  const ctx = { view, session, signal, navigate };
  const vehicle = /^\/app\/vehicles\/([^/]+)$/.exec(path);
  try {
    if (vehicle) {
      markNav('fleet');
      await renderVehiclePage(ctx, decodeURIComponent(vehicle[1]));
    } else if (path === '/app/reports') {
      markNav('reports');
      await renderReportsPage(ctx);
    } else {
      markNav('fleet');
      await renderFleetPage(ctx);
    }
  } catch (err) {
    if (signal.aborted || (err instanceof ApiError && err.status === 401)) return;
    replace(
      view,
      h('div', { class: 'card' }, h('h1', {}, 'Something went wrong'), h('p', { role: 'alert' }, err.message)),
    );
  }
}

void route();
