import type { TemperatureUnit } from '../analysis/physics/temperature-unit.js';
import type { WorkItem } from './weekly-report-schema.js';

/** The CSV columns, named as the JSON work-list fields (one row per vehicle, as the JSON). */
export const WORK_LIST_COLUMNS = [
  'rank',
  'vehicleId',
  'label',
  'riskScore',
  'priority',
  'severity',
  'kind',
  'status',
  'since',
  'lastSeen',
  'confidence',
  'troubleCode',
  'why',
  'check',
  'caution',
  'findingId',
  'findingIds',
  'findingCount',
  'depot',
  'defaultProfile',
  'temperatureUnit',
] as const;

type Column = (typeof WORK_LIST_COLUMNS)[number];

/** One cell: a scalar field as it is, the vehicle's findings as their ids (space-separated) and their count. */
function cell(item: WorkItem, column: Column, unit: TemperatureUnit): string | number | null {
  if (column === 'findingIds') return item.findings.map((f) => f.findingId).join(' ');
  if (column === 'findingCount') return item.findings.length;
  if (column === 'depot') return item.depot ?? null;
  if (column === 'defaultProfile') return item.defaultProfile ? 'true' : 'false';
  if (column === 'temperatureUnit') return unit;
  return item[column];
}

// Spreadsheets run a cell that starts with one of these as a formula (OWASP "CSV injection").
const FORMULA_START = /^[=+\-@\t\r]/;

/**
 * One CSV field (RFC 4180): quoted when it holds a comma, a quote, CR or LF, with quotes
 * doubled. Text that a spreadsheet would run as a formula is prefixed with an apostrophe.
 */
export function csvField(value: string | number | null): string {
  if (value === null) return '';
  if (typeof value === 'number') return String(value);
  const text = FORMULA_START.test(value) ? `'${value}` : value;
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** The work list as CSV: a header row, CRLF line ends (RFC 4180), UTF-8; `temperatureUnit` says the unit of the sentences' temperatures. */
export function renderWorkListCsv(items: readonly WorkItem[], unit: TemperatureUnit = 'C'): string {
  const lines = [WORK_LIST_COLUMNS.join(',')];
  for (const w of items) lines.push(WORK_LIST_COLUMNS.map((c) => csvField(cell(w, c, unit))).join(','));
  return `${lines.join('\r\n')}\r\n`;
}
