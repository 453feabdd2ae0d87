import { type Static, Type } from 'typebox';

/**
 * The weekly report's JSON format. The TypeBox schema is the single definition: the
 * TypeScript type is derived from it, and the HTTP route serialises and documents with it.
 * Times are RFC 3339 strings (UTC), dates YYYY-MM-DD, temperatures °C.
 */

const Nullable = <T extends Parameters<typeof Type.Union>[0][number]>(t: T) => Type.Union([t, Type.Null()]);
const SeverityT = Type.Union([Type.Literal('advisory'), Type.Literal('warning'), Type.Literal('critical')]);
const PriorityT = Type.Union(
  [Type.Literal('book now'), Type.Literal('book this week'), Type.Literal('at next service')],
  {
    description: 'from the severity: critical → book now, warning → book this week, advisory → at next service',
  },
);

export const SilentGateway = Type.Object({
  vehicleId: Type.String(),
  label: Nullable(Type.String()),
  lastReadingAt: Nullable(
    Type.String({ description: 'latest reading before the report time; null: none in the look-back window' }),
  ),
  silentHours: Nullable(Type.Number({ description: 'hours without data at the report time' })),
  usualLongestBreakHours: Nullable(
    Type.Number({ description: 'longest break between days with data in the four weeks before the report week, h' }),
  ),
  unusual: Type.Boolean({
    description:
      'silent for longer than any break in the four weeks before (or with no such history): look at the gateway',
  }),
});

export const FleetSummary = Type.Object({
  vehicles: Type.Integer({ description: 'vehicles registered to the fleet' }),
  vehiclesReporting: Type.Integer({ description: 'vehicles with data on at least one day of the week' }),
  engineHours: Type.Number({ description: 'engine running hours in the week, h' }),
  engineRuns: Type.Integer(),
  coldStarts: Type.Integer(),
  vehiclesToBook: Type.Integer({ description: 'vehicles on the work list' }),
  silentGatewayHours: Type.Number({ description: 'a gateway silent for this long is listed, h' }),
  silentGateways: Type.Array(SilentGateway),
});

export const FindingCount = Type.Object({
  kind: Type.String(),
  severity: SeverityT,
  new: Type.Integer({ description: 'onset (first evidence) within the week' }),
  ongoing: Type.Integer({ description: 'onset before the week, not resolved by its end' }),
  resolved: Type.Integer({ description: 'resolved within the week' }),
});

export const FindingsSummary = Type.Object({
  totals: Type.Object({ new: Type.Integer(), ongoing: Type.Integer(), resolved: Type.Integer() }),
  byKindSeverity: Type.Array(FindingCount),
  resolvedThisWeek: Type.Array(
    Type.Object({
      findingId: Type.String(),
      vehicleId: Type.String(),
      kind: Type.String(),
      severity: SeverityT,
      resolvedAt: Type.String(),
      reason: Nullable(Type.String()),
    }),
  ),
});

const WorkStatusT = Type.Union([Type.Literal('open'), Type.Literal('acknowledged'), Type.Literal('deferred')], {
  description: 'acknowledged: seen by a planner, not repaired; deferred: postponed until deferredUntil',
});

/** One unresolved finding in a vehicle's work-list row. */
export const WorkFinding = Type.Object({
  findingId: Type.String(),
  kind: Type.String(),
  severity: SeverityT,
  status: WorkStatusT,
  priority: PriorityT,
  why: Type.String({ description: "the finding's one-sentence summary" }),
  check: Type.String({ description: 'what to check for this finding (without the cautions)' }),
  since: Type.String({ description: 'date of the first evidence (YYYY-MM-DD)' }),
  lastSeen: Type.String({ description: 'date of the latest evidence (YYYY-MM-DD)' }),
  confidence: Type.Number({ minimum: 0, maximum: 1 }),
  troubleCode: Nullable(Type.String()),
  deferredUntil: Nullable(Type.String({ description: 'deferred: the date the work waits for (YYYY-MM-DD)' })),
  deferredReason: Nullable(Type.String()),
  profileNote: Type.Optional(
    Nullable(
      Type.String({
        description:
          "which of the finding's figures the default profile sets (vehicle on the default profile); null: none",
      }),
    ),
  ),
});

/**
 * One row per vehicle. The finding fields (findingId, kind, severity, status, why, confidence,
 * troubleCode) are those of the vehicle's most severe finding; `findings` lists every one.
 */
export const WorkItem = Type.Object({
  rank: Type.Integer({ minimum: 1, description: 'order on the work list: vehicles by risk, as the at-risk list' }),
  vehicleId: Type.String(),
  label: Nullable(Type.String()),
  riskScore: Type.Number({ minimum: 0, maximum: 100 }),
  defaultProfile: Type.Optional(
    Type.Boolean({
      description: 'no profile set: boiling and freezing figures assume the default cap, glycol and thermostat',
    }),
  ),
  depot: Type.Optional(Nullable(Type.String({ description: "the vehicle's depot" }))),
  priority: PriorityT,
  findingId: Type.String({ description: 'the most severe finding' }),
  kind: Type.String(),
  severity: SeverityT,
  status: WorkStatusT,
  deferredUntil: Nullable(Type.String()),
  deferredReason: Nullable(Type.String()),
  why: Type.String({ description: "the most severe finding's summary" }),
  check: Type.String({ description: 'every check of the vehicle in one text (the list is in `checks`)' }),
  since: Type.String({ description: 'date of the earliest first evidence (YYYY-MM-DD)' }),
  lastSeen: Type.String({ description: 'date of the latest evidence (YYYY-MM-DD)' }),
  confidence: Type.Number({ minimum: 0, maximum: 1 }),
  troubleCode: Nullable(Type.String()),
  caution: Type.String({ description: 'every caution in one text (the list is in `cautions`)' }),
  findings: Type.Array(WorkFinding, { description: 'every unresolved finding of the vehicle, most severe first' }),
  checks: Type.Array(Type.String(), { description: 'one combined list of checks for one shop visit, without repeats' }),
  cautions: Type.Array(Type.String(), {
    description: 'the general safety caution, then those the checks call for (engine running, coolant disposal)',
  }),
});

export const CurvePoint = Type.Tuple([
  Type.Number({ description: 'minutes since engine start' }),
  Type.Number({ description: 'coolant °C' }),
]);

export const WarmupCurve = Type.Object({
  runStart: Type.String(),
  startAmbientC: Nullable(Type.Number()),
  timeToTargetMin: Nullable(Type.Number({ description: 'minutes to the warm-up target; null: not reached' })),
  source: Type.Union([Type.Literal('readings'), Type.Literal('newton-fit')], {
    description: "measured readings, or the run's stored first-order fit where readings are gone",
  }),
  points: Type.Array(CurvePoint),
});

export const BandPoint = Type.Object({
  minute: Type.Number(),
  lowC: Type.Number(),
  medianC: Type.Number(),
  highC: Type.Number(),
});

export const WarmupChart = Type.Object({
  warmupTargetC: Type.Number({ description: 'thermostat rating − 11.1 °C (the 20 °F criterion of 13 CCR 1968.2)' }),
  thermostatOpenC: Type.Number(),
  baselineRuns: Type.Integer({ description: 'healthy cold starts the band is built from' }),
  baselineUntil: Nullable(
    Type.String({ description: 'the band uses cold starts before this date (onset of the earliest open finding)' }),
  ),
  band: Type.Array(BandPoint, {
    description: '10th–90th percentile of the first-order fits of healthy cold starts; empty: too few',
  }),
  curves: Type.Array(WarmupCurve, { description: "the week's most recent cold starts" }),
});

export const PeakDay = Type.Object({
  day: Type.String(),
  peakCoolantC: Type.Number(),
  ambientMaxC: Nullable(Type.Number()),
  engineHours: Type.Number(),
});

export const PeakTrend = Type.Object({
  senSlopeCPerDay: Type.Number({ description: "Sen's slope of the daily peaks over the trend window, °C/day" }),
  windowDays: Type.Integer(),
  levelC: Type.Number({
    description: 'median of the last five daily peaks, °C (the trend line passes through it on the last day)',
  }),
  anchorDay: Type.String(),
  daysToBoil: Nullable(
    Type.Number({
      description: 'days from the anchor day until the trend line reaches the boiling point; null: not rising',
    }),
  ),
  projectedBoilDate: Nullable(Type.String()),
});

export const PeakChart = Type.Object({
  boilingPointC: Type.Number({
    description: 'boiling point of the coolant at cap pressure (IAPWS-IF97 + glycol elevation)',
  }),
  hotThresholdC: Type.Number(),
  days: Type.Array(PeakDay),
  trend: Nullable(PeakTrend),
});

export const VehicleSection = Type.Object({
  vehicleId: Type.String(),
  label: Nullable(Type.String()),
  engineFamily: Type.String(),
  riskScore: Type.Number(),
  priority: PriorityT,
  capPressureKpa: Type.Number(),
  glycolPercent: Type.Number(),
  atmosphericPressureKpa: Type.Optional(Type.Number({ description: 'the site pressure the boiling point uses, kPa' })),
  depot: Type.Optional(Nullable(Type.String({ description: "the vehicle's depot" }))),
  siteSource: Type.Optional(
    Type.Union([Type.Literal('vehicle'), Type.Literal('depot'), Type.Literal('sea level')], {
      description: 'where the site pressure comes from',
    }),
  ),
  defaultProfile: Type.Optional(
    Type.Boolean({
      description:
        'no profile set: cap, glycol and thermostat are defaults, so boiling and freezing figures are assumptions',
    }),
  ),
  findingIds: Type.Array(Type.String()),
  headline: Type.String({ description: "the top finding's summary" }),
  warmup: WarmupChart,
  peaks: PeakChart,
});

export const SensorFaultRow = Type.Object({
  vehicleId: Type.String(),
  events: Type.Record(Type.String(), Type.Integer(), {
    description: 'sensor events in the week by kind (runs affected)',
  }),
  openFinding: Nullable(Type.String({ description: 'summary of an open sensor-fault finding' })),
});

export const GapRow = Type.Object({
  vehicleId: Type.String(),
  daysWithData: Type.Integer(),
  dropouts: Type.Integer(),
  missingHours: Type.Number({ description: 'time missing inside engine runs, h' }),
  missingFraction: Type.Number({ description: 'share of running time missing, 0..1' }),
  usualMissingFraction: Nullable(
    Type.Number({ description: 'the same share over the four weeks before; null: no history' }),
  ),
});

export const ReportCoverage = Type.Object(
  {
    vehiclesWithData: Type.Integer({ description: 'vehicles with analysed readings in the week' }),
    vehicleDays: Type.Integer(),
    readings: Type.Integer({ description: 'analysed readings of the week' }),
    firstReadingAt: Nullable(Type.String({ format: 'date-time' })),
    lastReadingAt: Nullable(Type.String({ format: 'date-time' })),
    pendingVehicles: Type.Integer({ description: 'vehicles whose readings of the week still wait for analysis' }),
    complete: Type.Boolean({ description: 'the week has ended and its analysis has caught up' }),
    stamp: Type.String({
      description:
        'fingerprint of the data the report was built from; an archived report whose data changed is rebuilt',
    }),
    statement: Type.String({ description: 'what the report covers, in words' }),
  },
  { description: 'what data the report covers' },
);

export const WeeklyReportSchema = Type.Object(
  {
    formatVersion: Type.Literal(1),
    fleet: Type.Object({ fleetId: Type.String(), name: Type.String(), timeZone: Type.String() }),
    week: Type.Object({
      isoWeek: Type.String({ pattern: '^\\d{4}-W\\d{2}$' }),
      firstDay: Type.String(),
      lastDay: Type.String(),
      start: Type.String({ description: 'Monday 00:00 in the fleet time zone' }),
      end: Type.String({ description: 'next Monday 00:00 in the fleet time zone (exclusive)' }),
    }),
    generatedAt: Type.String(),
    unit: Type.Optional(
      Type.Union([Type.Literal('C'), Type.Literal('F')], {
        description: 'unit of every temperature in the report (absent: C); archived reports are kept in °C',
      }),
    ),
    asOf: Type.String({ description: 'the earlier of the week end and the generation time' }),
    coverage: ReportCoverage,
    summary: FleetSummary,
    findings: FindingsSummary,
    workList: Type.Array(WorkItem),
    vehicles: Type.Array(VehicleSection, { description: 'charts of the highest-risk vehicles on the work list' }),
    dataQuality: Type.Object({ sensorFaults: Type.Array(SensorFaultRow), gaps: Type.Array(GapRow) }),
    caution: Type.String(),
  },
  { $id: 'WeeklyReport', description: 'The weekly maintenance report of one fleet and ISO week.' },
);

export type WeeklyReport = Static<typeof WeeklyReportSchema>;
export type WorkItem = Static<typeof WorkItem>;
export type WorkFinding = Static<typeof WorkFinding>;
export type VehicleSection = Static<typeof VehicleSection>;
export type WarmupChart = Static<typeof WarmupChart>;
export type PeakChart = Static<typeof PeakChart>;
export type Priority = WorkItem['priority'];
