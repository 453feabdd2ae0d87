import { DEFAULT_ANALYSIS_CONFIG } from '../analysis/config.js';
import type { Priority } from './weekly-report-schema.js';

/** Planner wording for each finding kind (the kinds are the analysis' identifiers). */
export const KIND_LABELS: Readonly<Record<string, string>> = {
  'slow-warmup': 'slow warm-up',
  overshoot: 'temperature overshoot',
  'overheating-trend': 'rising running temperature',
  'sensor-fault': 'coolant sensor fault',
  // True both when the peaks come near the boiling point and when they have reached it.
  'boil-margin': 'too little margin to boiling',
  'freeze-risk': 'freeze risk',
  'coolant-loss': 'coolant loss',
};

export const kindLabel = (kind: string): string => KIND_LABELS[kind] ?? kind;

/** Planner wording for the sensor plausibility events (services/analysis/sensor-events.ts). */
export const SENSOR_EVENT_LABELS: Readonly<Record<string, string>> = {
  'out-of-range': 'values outside the sensor range',
  'implausible-rate': 'impossible jumps',
  stuck: 'flat while the engine warmed',
  'cold-soak-mismatch': 'off from the air temperature after a cold soak',
  dropout: 'readings missing',
};

export const sensorEventLabel = (kind: string): string => SENSOR_EVENT_LABELS[kind] ?? kind.replace(/-/g, ' ');

/** Why a finding was resolved, in words: the analysis stores 'evidence-stopped', 'superseded' or 'service-event:<kind>'. */
export function resolvedReasonLabel(reason: string | null): string | null {
  if (reason === null) return null;
  if (reason === 'evidence-stopped')
    return `the evidence stopped (no new sign of it for ${DEFAULT_ANALYSIS_CONFIG.findingStaleDays} days)`;
  if (reason === 'superseded')
    return 'superseded: the repair its baseline started at was deleted or moved, and the evidence now belongs to the earlier finding';
  if (reason.startsWith('service-event:'))
    return `repair recorded: ${reason.slice('service-event:'.length).replace(/-/g, ' ')}`;
  return reason.replace(/-/g, ' ');
}

/**
 * The SAE J1939 suspect parameter and failure mode that match an OBD-II code, for heavy
 * vehicles whose engines report J1939 DM1 codes rather than P-codes: SPN 110 is the engine
 * coolant temperature (SAE J1939-71); the FMI choices follow J1939-73's failure-mode meanings
 * (0 above normal, most severe; 2 erratic; 3 voltage above normal; 4 voltage below normal;
 * 18 below normal, moderately severe) — the pairing is common practice, from memory.
 */
const J1939_OF_OBD: Readonly<Record<string, string>> = {
  P0128: 'SPN 110 FMI 18',
  P0217: 'SPN 110 FMI 0',
  P0116: 'SPN 110 FMI 2',
  P0117: 'SPN 110 FMI 4',
  P0118: 'SPN 110 FMI 3',
  'P0117/P0118': 'SPN 110 FMI 3/4',
  P0119: 'SPN 110 FMI 2',
};

/**
 * A trouble code given as context, not as something the vehicle reported.
 * @example relatedCodeLabel('P0128') // 'related code P0128 (OBD-II) / SPN 110 FMI 18 (J1939)'
 */
export function relatedCodeLabel(code: string): string {
  const j1939 = J1939_OF_OBD[code];
  return `related code ${code} (OBD-II)${j1939 ? ` / ${j1939} (J1939)` : ''}`;
}

/** What each booking word means (the report's legend). */
export const PRIORITY_LEGEND: Readonly<Record<Priority, string>> = {
  'book now': 'a critical finding: take the vehicle off heavy duty and book it before its next shift',
  'book this week': 'a warning: book a shop visit within the week',
  'at next service': 'an advisory: have it checked at the next planned service',
};

export const SEVERITY_LEGEND: Readonly<Record<string, string>> = {
  critical: 'damage is likely soon (boiling, a stuck thermostat that has overheated)',
  warning: 'a clear fault that grows worse if left',
  advisory: 'an early or uncertain sign worth a look',
};

export const RISK_LEGEND =
  "Risk 0–100 combines the vehicle's unresolved findings: each adds by its severity and confidence and fades " +
  `as its last evidence ages (by half every ${DEFAULT_ANALYSIS_CONFIG.riskHalfLifeDays} days by default). Acknowledged and deferred findings still count; only a repair or quiet evidence removes them.`;

export const STATUS_LEGEND =
  'Acknowledged: a planner has seen it, nothing is repaired yet. Deferred: the work is postponed until the date shown, for the reason given.';
