/**
 * A small Prometheus text-format registry: counters and histograms with labels. Enough for the
 * handful of series the service exports, without another dependency.
 */
type Labels = Record<string, string>;

function labelKey(labels: Labels): string {
  const keys = Object.keys(labels).sort();
  return keys
    .map((k) => `${k}="${String(labels[k]).replace(/\\/g, '\\\\').replace(/"/g, '\\"').replace(/\n/g, '\\n')}"`)
    .join(',');
}

export class Counter {
  private readonly values = new Map<string, number>();
  constructor(
    readonly name: string,
    readonly help: string,
  ) {}

  inc(labels: Labels = {}, by = 1): void {
    const key = labelKey(labels);
    this.values.set(key, (this.values.get(key) ?? 0) + by);
  }

  get(labels: Labels = {}): number {
    return this.values.get(labelKey(labels)) ?? 0;
  }

  render(): string {
    const lines = [`# HELP ${this.name} ${this.help}`, `# TYPE ${this.name} counter`];
    for (const [key, value] of this.values) lines.push(`${this.name}${key ? `{${key}}` : ''} ${value}`);
    return lines.join('\n');
  }
}

export class Histogram {
  private readonly series = new Map<string, { counts: number[]; sum: number; count: number }>();
  constructor(
    readonly name: string,
    readonly help: string,
    readonly buckets: number[],
  ) {}

  observe(labels: Labels, value: number): void {
    const key = labelKey(labels);
    let s = this.series.get(key);
    if (!s) {
      s = { counts: new Array<number>(this.buckets.length).fill(0), sum: 0, count: 0 };
      this.series.set(key, s);
    }
    for (let i = 0; i < this.buckets.length; i++) if (value <= this.buckets[i]!) s.counts[i]!++;
    s.sum += value;
    s.count++;
  }

  render(): string {
    const lines = [`# HELP ${this.name} ${this.help}`, `# TYPE ${this.name} histogram`];
    for (const [key, s] of this.series) {
      const sep = key ? ',' : '';
      this.buckets.forEach((b, i) => lines.push(`${this.name}_bucket{${key}${sep}le="${b}"} ${s.counts[i]}`));
      lines.push(`${this.name}_bucket{${key}${sep}le="+Inf"} ${s.count}`);
      lines.push(`${this.name}_sum${key ? `{${key}}` : ''} ${s.sum}`);
      lines.push(`${this.name}_count${key ? `{${key}}` : ''} ${s.count}`);
    }
    return lines.join('\n');
  }
}

/** The service's metrics. One instance per app so tests do not share counts. */
export class ServiceMetrics {
  readonly ingestReadings = new Counter(
    'thermocline_ingest_readings_total',
    'Readings received by POST /v1/readings, by result (accepted, duplicate, rejected).',
  );
  readonly ingestBatches = new Counter(
    'thermocline_ingest_batches_total',
    'Ingest requests committed, by body format.',
  );
  readonly ingestFailures = new Counter(
    'thermocline_ingest_failures_total',
    'Ingest requests that stored nothing, by HTTP status.',
  );
  readonly requestDuration = new Histogram(
    'thermocline_http_request_duration_seconds',
    'HTTP request latency by method, route and status.',
    [0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30],
  );
  readonly extra: Array<{ render(): string }> = [];

  render(): string {
    return (
      [this.ingestReadings, this.ingestBatches, this.ingestFailures, this.requestDuration, ...this.extra]
        .map((m) => m.render())
        .join('\n') + '\n'
    );
  }
}
