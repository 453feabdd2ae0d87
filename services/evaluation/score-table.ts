import type { RunScore } from './scoring.js';

/** A labelled column of the table. */
export interface Column {
  title: string;
  score: RunScore | null;
}

const LABEL_WIDTH = 46;
const CELL_WIDTH = 27;

const ratio = (a: number, b: number) => (b > 0 ? `${(a / b).toFixed(2)} (${a}/${b})` : '—');
const days = (d: number | null) => (d === null ? '—' : d.toFixed(1));

function row(label: string, cells: readonly string[]): string {
  return `${label.padEnd(LABEL_WIDTH)}${cells.map((c) => c.padEnd(CELL_WIDTH)).join('')}`.trimEnd();
}

/**
 * Plain-text table of several runs side by side: per fault kind found/visible, right kind,
 * median and worst delay; per cohort the healthy vehicles with any finding and with a warning
 * or above; precision, risk-order average precision, findings before onset; the alarms on
 * healthy vehicles by kind and severity.
 * @example formatScoreTable([{ title: 'streamed', score }])
 */
export function formatScoreTable(columns: readonly Column[]): string {
  const cell = (f: (s: RunScore) => string) => columns.map((c) => (c.score ? f(c.score) : 'not run'));
  const ref = columns.find((c) => c.score)?.score;
  const lines = [
    row(
      '',
      columns.map((c) => c.title),
    ),
    row(
      '',
      columns.map(() => '-'.repeat(CELL_WIDTH - 2)),
    ),
  ];
  for (const k of ref?.faults ?? []) {
    const of = (s: RunScore) => s.faults.find((x) => x.kind === k.kind);
    lines.push(
      row(
        `${k.kind} (n ${k.n}): found/visible`,
        cell((s) => ratio(of(s)?.found ?? 0, of(s)?.visible ?? 0)),
      ),
    );
    lines.push(
      row(
        '  right kind / visible',
        cell((s) => ratio(of(s)?.rightKind ?? 0, of(s)?.visible ?? 0)),
      ),
    );
    lines.push(
      row(
        '  delay from onset, median / worst (d)',
        cell((s) => `${days(of(s)?.medianDelayDays ?? null)} / ${days(of(s)?.worstDelayDays ?? null)}`),
      ),
    );
  }
  lines.push(
    row(
      'all faults: found / visible',
      cell((s) => ratio(s.found, s.visibleFaults)),
    ),
  );
  lines.push(
    row(
      'all faults: right kind / visible',
      cell((s) => ratio(s.rightKind, s.visibleFaults)),
    ),
  );
  for (const h of ref?.healthy ?? []) {
    const of = (s: RunScore) => s.healthy.find((x) => x.cohort === h.cohort);
    lines.push(
      row(
        `healthy, ${h.cohort}: any finding`,
        cell((s) => ratio(of(s)?.anyFinding ?? 0, of(s)?.n ?? 0)),
      ),
    );
    lines.push(
      row(
        `healthy, ${h.cohort}: warning or above`,
        cell((s) => ratio(of(s)?.warningOrAbove ?? 0, of(s)?.n ?? 0)),
      ),
    );
  }
  lines.push(
    row(
      'finding precision',
      cell((s) => ratio(s.correctAlarms, s.alarms)),
    ),
  );
  lines.push(
    row(
      'risk ordering, average precision',
      cell((s) => (s.riskAveragePrecision === null ? '—' : s.riskAveragePrecision.toFixed(3))),
    ),
  );
  lines.push(
    row(
      'findings seen before onset',
      cell((s) => String(s.seenBeforeOnset)),
    ),
  );
  lines.push(
    row(
      'right-kind findings dated before onset',
      cell((s) => String(s.datedBeforeOnset)),
    ),
  );
  const alarmKeys = new Set(columns.flatMap((c) => c.score?.healthyAlarms.map((a) => `${a.kind} ${a.severity}`) ?? []));
  for (const key of [...alarmKeys].sort()) {
    lines.push(
      row(
        `alarms on healthy: ${key}`,
        cell((s) => String(s.healthyAlarms.find((a) => `${a.kind} ${a.severity}` === key)?.count ?? 0)),
      ),
    );
  }
  return lines.join('\n');
}
