/** The web view's calls to the service: the session cookie goes along, state-changing calls carry the CSRF token. */
let csrfToken = null;

export function setCsrfToken(token) {
  csrfToken = token;
}

export class ApiError extends Error {
  constructor(status, code, message) {
    super(message);
    this.status = status;
    this.code = code;
  }
}

/** Handlers the app sets: what to do when the session is gone. */
export const hooks = { onSignedOut: () => {} };

/**
 * @param {string} path e.g. '/v1/fleet/vehicles?limit=50'
 * @param {{ method?: string, body?: unknown, signal?: AbortSignal }} [options]
 */
export async function api(path, options = {}) {
  const method = options.method ?? 'GET';
  const headers = { accept: 'application/json' };
  if (options.body !== undefined) headers['content-type'] = 'application/json';
  if (method !== 'GET' && csrfToken) headers['x-csrf-token'] = csrfToken;
  const res = await fetch(path, {
    method,
    headers,
    credentials: 'same-origin',
    signal: options.signal,
    ...(options.body !== undefined ? { body: JSON.stringify(options.body) } : {}),
  });
  const text = await res.text();
  const json = text && (res.headers.get('content-type') ?? '').includes('json') ? JSON.parse(text) : null;
  if (!res.ok) {
    const err = new ApiError(
      res.status,
      json?.error?.code ?? 'error',
      json?.error?.message ?? `the service answered ${res.status}`,
    );
    if (res.status === 401 && !path.startsWith('/app/session')) hooks.onSignedOut(err);
    throw err;
  }
  return json;
}

export const query = (params) => {
  const q = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== null && v !== '') q.set(k, String(v));
  const s = q.toString();
  return s ? `?${s}` : '';
};
