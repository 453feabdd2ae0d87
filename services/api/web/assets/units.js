/**
 * The planner's choice of °C or °F, remembered by this browser (localStorage). Every read the
 * pages make passes it as `?unit=`: the service converts figures, chart data and the °C figures
 * in the finding sentences; the pages only label them.
 */
const KEY = 'thermocline.temperatureUnit';

/** 'C' or 'F' (C when nothing is stored or storage is blocked). */
export function temperatureUnit() {
  try {
    return window.localStorage.getItem(KEY) === 'F' ? 'F' : 'C';
  } catch {
    return 'C';
  }
}

export function setTemperatureUnit(unit) {
  try {
    window.localStorage.setItem(KEY, unit === 'F' ? 'F' : 'C');
  } catch {
    // Storage blocked (private mode with a strict policy): the choice lasts until the page reloads.
  }
}

/** The sign of the chosen unit: '°C' or '°F'. */
export const degree = () => (temperatureUnit() === 'F' ? '°F' : '°C');

/** `unit` for a query string: omitted for °C, the service's default. */
export const unitParam = () => (temperatureUnit() === 'F' ? 'F' : undefined);
