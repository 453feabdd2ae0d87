import { describe, expect, it } from 'vitest';
import { evaluateFleets } from '../../services/evaluation/field-evaluation.js';
import { formatScoreTable } from '../../services/evaluation/score-table.js';
import { planForSeed, seedRangeOf } from '../../services/evaluation/seed-ranges.js';
import { testServiceFactory } from '../helpers/evaluation-service.js';
import { testDatabaseKind } from '../helpers/test-database.js';

/** Two small tuning-range fleets: the test may look at them; the reporting range is for npm run evaluate. */
const PLANS = [planForSeed(1000, { vehicles: 4, days: 14 }), planForSeed(1008, { vehicles: 4, days: 14 })];

describe('field evaluation through the HTTP API', () => {
  it(
    'streams two fleets through a service with its worker, runs them again in one pass, and scores both beside the baseline',
    { timeout: 600_000 },
    async () => {
      expect(PLANS.map((p) => seedRangeOf(p.seed))).toEqual(['tuning', 'tuning']);
      const result = await evaluateFleets({ plans: PLANS, services: testServiceFactory(), analyseEveryH: 24 });
      console.log(
        `field evaluation (${testDatabaseKind()})\n${formatScoreTable([
          { title: 'streamed', score: result.streamed },
          { title: 'one pass', score: result.onePass },
          { title: 'baseline', score: result.baseline },
        ])}`,
      );

      expect(result.fleets).toHaveLength(2);
      for (const f of result.fleets) {
        expect(f.readings).toBeGreaterThan(10_000);
        expect(f.rejected).toBe(0);
        expect(f.onePassSeconds).not.toBeNull();
      }
      const healthy = PLANS.flatMap((p) => p.fleet).filter((v) => v.faults.length === 0).length;
      const faulty = PLANS.flatMap((p) => p.fleet).length - healthy;
      for (const score of [result.streamed, result.onePass!, result.baseline]) {
        expect(score.healthy.reduce((s, c) => s + c.n, 0)).toBe(healthy);
        expect(score.faults.reduce((s, f) => s + f.n, 0)).toBe(faulty);
        for (const f of score.faults) {
          expect(f.found).toBeLessThanOrEqual(f.visible);
          expect(f.rightKind).toBeLessThanOrEqual(f.found);
        }
        for (const c of score.healthy) expect(c.warningOrAbove).toBeLessThanOrEqual(c.anyFinding);
        if (score.precision !== null) expect(score.precision).toBeGreaterThanOrEqual(0);
        if (score.riskAveragePrecision !== null) expect(score.riskAveragePrecision).toBeLessThanOrEqual(1);
      }
    },
  );
});
