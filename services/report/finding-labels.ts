/** Planner wording for each finding kind (the kinds are the analysis' identifiers). */
export const KIND_LABELS: Readonly<Record<string, string>> = {
  'slow-warmup': 'slow warm-up',
  overshoot: 'temperature overshoot',
  'overheating-trend': 'rising running temperature',
  'sensor-fault': 'coolant sensor fault',
  'boil-margin': 'close to boiling',
  'freeze-risk': 'freeze risk',
  'coolant-loss': 'coolant loss',
};

export const kindLabel = (kind: string): string => KIND_LABELS[kind] ?? kind;
