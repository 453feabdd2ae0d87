import { api } from './api.js';
import { h } from './dom.js';

/** Editable fields: [API field, label, input type, attributes]. */
const FIELDS = [
  ['label', 'Label (e.g. plate)', 'text', { maxlength: 200 }],
  ['depot', 'Depot', 'text', { maxlength: 64 }],
  ['engineFamily', 'Engine family', 'text', { maxlength: 64 }],
  ['thermostatOpenC', 'Thermostat rating, °C', 'number', { min: 60, max: 110, step: 0.5 }],
  ['capPressureKpa', 'Pressure cap, kPa gauge', 'number', { min: 0, max: 250, step: 1 }],
  ['glycolPercent', 'Glycol, % by mass', 'number', { min: 0, max: 70, step: 1 }],
  ['siteAltitudeM', 'Site altitude, m', 'number', { min: -500, max: 5000, step: 1 }],
];
const NULLABLE = new Set(['label', 'depot', 'siteAltitudeM']);

/** The vehicle's profile; editable when the session's key may change profiles (ingest or admin scope). */
export function profileSection(vehicle, session, onSaved) {
  const facts = h(
    'dl',
    { class: 'facts wide', id: 'profile-facts' },
    FIELDS.map(([k, label]) => [h('dt', {}, label), h('dd', {}, vehicle[k] ?? '—')]),
    h('dt', {}, 'Atmospheric pressure used'),
    h('dd', {}, `${vehicle.atmosphericPressureKpa} kPa`),
    h('dt', {}, 'Profile'),
    h(
      'dd',
      {},
      vehicle.defaultProfile
        ? 'defaults (no profile set: boiling and freezing figures are assumptions)'
        : `set, last changed ${vehicle.updatedAt.slice(0, 10)}`,
    ),
  );
  const section = h(
    'section',
    { 'aria-labelledby': 'profile-heading' },
    h('h2', { id: 'profile-heading' }, 'Profile'),
    facts,
  );
  if (!session.canEditProfiles) {
    section.append(
      h(
        'p',
        { class: 'sub' },
        'Profile changes need a key with the ingest or admin scope; this session is read-only for profiles.',
      ),
    );
    return section;
  }
  const inputs = new Map();
  const result = h('p', { role: 'status', id: 'profile-result' });
  const form = h(
    'form',
    { class: 'card', id: 'profile-form' },
    h('h3', {}, 'Edit the profile'),
    h(
      'div',
      { class: 'row wrap' },
      FIELDS.map(([k, label, type, attrs]) => {
        const input = h('input', { id: `profile-${k}`, name: k, type, value: vehicle[k] ?? '', ...attrs });
        inputs.set(k, input);
        return h('div', { class: 'field' }, h('label', { for: `profile-${k}` }, label), input);
      }),
    ),
    h('button', { type: 'submit' }, 'Save profile'),
    result,
  );
  form.addEventListener('submit', async (event) => {
    event.preventDefault();
    // Only what changed is sent: an unchanged default stays a default.
    const patch = {};
    for (const [k, , type] of FIELDS) {
      const raw = inputs.get(k).value.trim();
      const value = raw === '' ? null : type === 'number' ? Number(raw) : raw;
      if (value === (vehicle[k] ?? null)) continue;
      if (value === null && !NULLABLE.has(k)) continue;
      patch[k] = value;
    }
    if (Object.keys(patch).length === 0) {
      result.textContent = 'Nothing changed.';
      return;
    }
    try {
      await api(`/v1/vehicles/${encodeURIComponent(vehicle.vehicleId)}`, { method: 'PUT', body: patch });
      await onSaved('Profile saved. The next analysis uses it.');
    } catch (err) {
      result.textContent = err.message;
    }
  });
  section.append(form);
  return section;
}
