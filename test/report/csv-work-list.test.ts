import { describe, expect, it } from 'vitest';
import { SAFETY_CAUTION } from '../../services/analysis/findings/finding.js';
import { csvField, renderWorkListCsv, WORK_LIST_COLUMNS } from '../../services/report/csv-work-list.js';
import type { WorkItem } from '../../services/report/weekly-report-schema.js';

/** Parses RFC 4180 text (quoted fields, doubled quotes, CRLF records) — written from the RFC's grammar. */
function parseRfc4180(text: string): string[][] {
  const records: string[][] = [];
  let field = '',
    record: string[] = [],
    i = 0,
    quoted = false;
  while (i < text.length) {
    const c = text[i]!;
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') {
        field += '"';
        i += 2;
        continue;
      }
      if (c === '"') {
        quoted = false;
        i++;
        continue;
      }
      field += c;
      i++;
      continue;
    }
    if (c === '"' && field === '') {
      quoted = true;
      i++;
      continue;
    }
    if (c === ',') {
      record.push(field);
      field = '';
      i++;
      continue;
    }
    if (c === '\r' && text[i + 1] === '\n') {
      record.push(field);
      records.push(record);
      record = [];
      field = '';
      i += 2;
      continue;
    }
    field += c;
    i++;
  }
  return records;
}

const item = (over: Partial<WorkItem>): WorkItem => ({
  rank: 1,
  vehicleId: 'V-1',
  label: null,
  riskScore: 80.5,
  priority: 'book now',
  findingId: 'f-1',
  kind: 'overheating-trend',
  severity: 'critical',
  status: 'open',
  deferredUntil: null,
  deferredReason: null,
  why: 'Peaks rise.',
  check: 'Check the fan.',
  since: '2026-11-02',
  lastSeen: '2026-11-27',
  confidence: 0.92,
  troubleCode: 'P0217',
  caution: SAFETY_CAUTION,
  checks: ['Check the fan.'],
  cautions: [SAFETY_CAUTION],
  findings: [
    {
      findingId: 'f-1',
      kind: 'overheating-trend',
      severity: 'critical',
      status: 'open',
      priority: 'book now',
      why: 'Peaks rise.',
      check: 'Check the fan.',
      since: '2026-11-02',
      lastSeen: '2026-11-27',
      confidence: 0.92,
      troubleCode: 'P0217',
      deferredUntil: null,
      deferredReason: null,
    },
  ],
  ...over,
});

describe('the CSV work list (RFC 4180)', () => {
  it('quotes fields holding a comma, a double quote or a line break, doubling the quotes (RFC 4180 §2.6, §2.7)', () => {
    expect(csvField('plain')).toBe('plain');
    expect(csvField('a,b')).toBe('"a,b"');
    expect(csvField('say "hot"')).toBe('"say ""hot"""');
    expect(csvField('line\nbreak')).toBe('"line\nbreak"');
    expect(csvField('cr\rhere')).toBe('"cr\rhere"');
    expect(csvField(null)).toBe('');
    expect(csvField(0.92)).toBe('0.92');
  });

  it('defuses text a spreadsheet would run as a formula (OWASP CSV injection advice)', () => {
    expect(csvField('=HYPERLINK("x")')).toBe('"\'=HYPERLINK(""x"")"');
    expect(csvField('@SUM(A1)')).toBe("'@SUM(A1)");
    expect(csvField('-1')).toBe("'-1");
  });

  it('writes a header row and one CRLF-terminated record per item that parse back to the same values', () => {
    const items = [
      item({}),
      item({
        rank: 2,
        label: 'depot "north", bay 3\r\nspare',
        why: 'Two lines\nof text, with commas.',
        troubleCode: null,
      }),
    ];
    const csv = renderWorkListCsv(items);
    expect(csv.endsWith('\r\n')).toBe(true);
    const rows = parseRfc4180(csv);
    expect(rows[0]).toEqual([...WORK_LIST_COLUMNS]);
    expect(rows).toHaveLength(3);
    for (const [k, w] of items.entries()) {
      const row = Object.fromEntries(WORK_LIST_COLUMNS.map((c, i) => [c, rows[k + 1]![i]]));
      expect(row).toMatchObject({
        rank: String(w.rank),
        vehicleId: w.vehicleId,
        label: w.label ?? '',
        riskScore: String(w.riskScore),
        why: w.why,
        troubleCode: w.troubleCode ?? '',
        caution: SAFETY_CAUTION,
        findingIds: 'f-1',
        findingCount: '1',
      });
    }
  });
});
