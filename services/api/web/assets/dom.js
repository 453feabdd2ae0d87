/** Builds DOM nodes from data without HTML strings: text is always text, never markup. */
export function h(tag, attrs = {}, ...children) {
  const el = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs ?? {})) {
    if (v === undefined || v === null || v === false) continue;
    if (k.startsWith('on') && typeof v === 'function') el.addEventListener(k.slice(2), v);
    else if (k === 'class') el.className = v;
    else if (k === 'dataset') Object.assign(el.dataset, v);
    else if (v === true) el.setAttribute(k, '');
    else el.setAttribute(k, String(v));
  }
  append(el, children);
  return el;
}

function append(el, children) {
  for (const c of children.flat(Infinity)) {
    if (c === undefined || c === null || c === false) continue;
    el.append(c instanceof Node ? c : document.createTextNode(String(c)));
  }
}

/** Replaces the children of `el`. */
export function replace(el, ...children) {
  el.replaceChildren();
  append(el, children);
  return el;
}

const SEVERITY_WORD = { critical: 'critical', warning: 'warning', advisory: 'advisory' };
const PRIORITY_OF = { critical: 'book now', warning: 'book this week', advisory: 'at next service' };
const PRIORITY_MARK = { critical: '▲', warning: '◆', advisory: '●' };

/** The priority as a word, a shape and a colour (never the colour alone). */
export function priorityBadge(severity) {
  return h(
    'span',
    { class: `badge sev-${severity}` },
    h('span', { 'aria-hidden': 'true', class: 'mark' }, PRIORITY_MARK[severity] ?? '●'),
    ' ',
    PRIORITY_OF[severity] ?? severity,
  );
}

export function severityBadge(severity) {
  return h(
    'span',
    { class: `badge small sev-${severity}` },
    h('span', { 'aria-hidden': 'true', class: 'mark' }, PRIORITY_MARK[severity] ?? '●'),
    ' ',
    SEVERITY_WORD[severity] ?? severity,
  );
}

export function statusBadge(status, deferredUntil) {
  if (status === 'acknowledged') return h('span', { class: 'status st-ack' }, '✓ acknowledged');
  if (status === 'deferred')
    return h(
      'span',
      { class: 'status st-def' },
      `⏸ deferred${deferredUntil ? ` until ${deferredUntil.slice(0, 10)}` : ''}`,
    );
  if (status === 'resolved') return h('span', { class: 'status st-res' }, 'resolved');
  return h('span', { class: 'status st-open' }, 'open');
}

export const day = (iso) => (iso ? iso.slice(0, 10) : '—');
export const dayTime = (iso) => (iso ? `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC` : '—');
