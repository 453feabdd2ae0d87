/** The at-risk list as `GET /v1/fleet/at-risk` returns it. */
export interface AtRiskVehicle {
  vehicleId: string;
  riskScore: number;
  findings: Array<{
    id: string;
    kind: string;
    severity: string;
    confidence: number;
    firstSeen: string;
    lastSeen: string;
    summary: string;
  }>;
}

function fit(text: string, width: number): string {
  return text.length <= width ? text.padEnd(width) : `${text.slice(0, width - 1)}…`;
}

/**
 * A readable text table of the at-risk list: one line per vehicle with its worst finding, and
 * an indented line per further finding.
 */
export function formatAtRiskTable(vehicles: AtRiskVehicle[], checks: Map<string, string>): string {
  const lines = [
    `${'vehicle'.padEnd(10)} ${'risk'.padStart(5)}  ${'finding'.padEnd(20)} ${'severity'.padEnd(9)} ${'conf'.padStart(4)}  ${'since'.padEnd(10)}  what to check`,
  ];
  lines.push('-'.repeat(lines[0]!.length + 40));
  for (const v of vehicles) {
    v.findings.forEach((f, i) => {
      const head =
        i === 0
          ? `${v.vehicleId.padEnd(10)} ${v.riskScore.toFixed(0).padStart(5)}`
          : `${''.padEnd(10)} ${''.padStart(5)}`;
      const check = checks.get(f.id) ?? f.summary;
      lines.push(
        `${head}  ${fit(f.kind, 20)} ${fit(f.severity, 9)} ${f.confidence.toFixed(2).padStart(4)}  ${f.firstSeen.slice(0, 10)}  ${fit(check, 70)}`,
      );
    });
    if (v.findings.length === 0)
      lines.push(`${v.vehicleId.padEnd(10)} ${v.riskScore.toFixed(0).padStart(5)}  (no open findings)`);
  }
  return lines.join('\n');
}
