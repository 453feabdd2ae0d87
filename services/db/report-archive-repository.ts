import type { Kysely } from 'kysely';
import type { Database } from './schema.js';

/** The archived weekly reports of a fleet, newest week first, without their bodies. */
export function createReportArchiveRepository(db: Kysely<Database>) {
  return {
    async list(fleetId: string, limit: number): Promise<Array<{ isoWeek: string; generatedAt: Date }>> {
      const rows = await db
        .selectFrom('weekly_reports')
        .select(['iso_week', 'generated_at'])
        .where('fleet_id', '=', fleetId)
        .orderBy('iso_week', 'desc')
        .limit(limit)
        .execute();
      return rows.map((r) => ({ isoWeek: r.iso_week, generatedAt: r.generated_at }));
    },
  };
}
