/**
 * Why the analysis closed a finding (findings.resolved_reason), beside 'service-event:<kind>'
 * for a repair.
 */

/** Its evidence stopped for the quiet period. */
export const EVIDENCE_STOPPED = 'evidence-stopped';

/**
 * It was derived under a baseline that a repair started, and that repair was deleted or moved:
 * the same evidence now belongs to the finding of the earlier baseline.
 */
export const SUPERSEDED = 'superseded';
