import { Type } from 'typebox';

export const SEVERITIES = ['advisory', 'warning', 'critical'] as const;
export const FINDING_STATUSES = ['open', 'acknowledged', 'deferred', 'resolved'] as const;
export const FINDING_KINDS = [
  'slow-warmup',
  'overshoot',
  'overheating-trend',
  'sensor-fault',
  'boil-margin',
  'freeze-risk',
  'coolant-loss',
] as const;

export const SeveritySchema = Type.Union(
  [Type.Literal('advisory'), Type.Literal('warning'), Type.Literal('critical')],
  { description: 'advisory < warning < critical' },
);
export const FindingStatusSchema = Type.Union(
  [Type.Literal('open'), Type.Literal('acknowledged'), Type.Literal('deferred'), Type.Literal('resolved')],
  {
    description:
      'open → acknowledged (seen by a planner) → resolved (by a repair or quiet evidence); deferred: work postponed until deferredUntil. ' +
      'Every status but resolved counts for risk and keeps the vehicle in the at-risk list.',
  },
);
export const FindingKindSchema = Type.Union(
  FINDING_KINDS.map((k) => Type.Literal(k)),
  { description: 'what the analysis found' },
);

const NullableString = Type.Union([Type.String(), Type.Null()]);
const NullableDate = Type.Union([Type.String({ format: 'date-time' }), Type.Null()]);

/** A finding in the at-risk list. */
export const FindingBrief = Type.Object({
  id: Type.String(),
  kind: Type.String(),
  severity: SeveritySchema,
  confidence: Type.Number({ minimum: 0, maximum: 1 }),
  firstSeen: Type.String({ format: 'date-time', description: 'onset as dated by the evidence' }),
  lastSeen: Type.String({ format: 'date-time', description: 'latest supporting evidence' }),
  summary: Type.String(),
  recommendedCheck: Type.String({ description: 'what to check, with the safety caution' }),
  troubleCode: NullableString,
  status: Type.Optional(FindingStatusSchema),
  deferredUntil: Type.Optional(NullableDate),
  defaultProfile: Type.Optional(
    Type.Boolean({
      description: 'the vehicle runs on the default profile: boiling and freezing figures are assumptions',
    }),
  ),
  profileNote: Type.Optional(NullableString),
});

/** Where a finding's vehicle is, and whether its figures rest on the default profile. */
const FindingVehicleContext = {
  defaultProfile: Type.Boolean({
    description:
      'the vehicle runs on the default profile (no cap, glycol or thermostat set): its boiling and freezing figures are assumptions',
  }),
  profileNote: Type.Union([Type.String(), Type.Null()], {
    description: "which of this finding's figures the default profile sets, in words; null when none",
  }),
  depot: Type.Union([Type.String(), Type.Null()], { description: "the vehicle's depot" }),
  atmosphericPressureKpa: Type.Number({
    description: "the atmospheric pressure the vehicle's boiling point uses, kPa",
  }),
  siteSource: Type.Union([Type.Literal('vehicle'), Type.Literal('depot'), Type.Literal('sea level')], {
    description: "where that pressure comes from: the vehicle's site, its depot's, or sea level",
  }),
};

export const EvidenceItemSchema = Type.Object({
  at: Type.String({ format: 'date-time', description: 'run start or day start' }),
  scope: Type.String({ description: "'run' or 'day'" }),
  metric: Type.String(),
  value: Type.Number(),
  expected: Type.Union([Type.Number(), Type.Null()]),
  z: Type.Union([Type.Number(), Type.Null()]),
});

/** A finding with its lifecycle and evidence. */
export const FindingSchema = Type.Object({
  id: Type.String(),
  vehicleId: Type.String(),
  fleetId: Type.String(),
  key: Type.String({ description: 'stable identity: kind[:subKind]@baseline start' }),
  kind: Type.String(),
  subKind: NullableString,
  severity: SeveritySchema,
  confidence: Type.Number({ minimum: 0, maximum: 1 }),
  status: FindingStatusSchema,
  firstSeen: Type.String({ format: 'date-time' }),
  lastSeen: Type.String({ format: 'date-time' }),
  raisedAt: NullableDate,
  summary: Type.String(),
  recommendedCheck: Type.String(),
  troubleCode: NullableString,
  metrics: Type.Record(Type.String(), Type.Number()),
  evidence: Type.Array(EvidenceItemSchema),
  acknowledgedAt: NullableDate,
  acknowledgedBy: NullableString,
  resolvedAt: NullableDate,
  resolvedReason: Type.Union([
    Type.String({
      description:
        "'evidence-stopped', 'superseded' (its baseline's repair was deleted or moved) or 'service-event:<kind>'",
    }),
    Type.Null(),
  ]),
  deferredUntil: Type.Union([
    Type.String({ format: 'date-time', description: 'deferred: the work is postponed until then' }),
    Type.Null(),
  ]),
  deferredReason: NullableString,
  deferredBy: Type.Union([Type.String({ description: 'id of the API key that deferred it' }), Type.Null()]),
  updatedAt: Type.String({ format: 'date-time' }),
  ...FindingVehicleContext,
});

export const FindingIdParams = Type.Object({ findingId: Type.String({ minLength: 1, maxLength: 64 }) });
