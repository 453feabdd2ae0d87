import fp from 'fastify-plugin';
import type { DatabaseHandle } from '../../db/database.js';
import { PartitionKeeper } from '../../db/partitions.js';

declare module 'fastify' {
  interface FastifyInstance {
    database: DatabaseHandle;
    partitions: PartitionKeeper;
  }
}

export interface DbPluginOptions {
  database: DatabaseHandle;
  /** Close the database when the app closes (the process entry owns it otherwise). */
  closeOnShutdown: boolean;
}

/** Makes the open database available to routes, and keeps the readings partitions ahead. */
export default fp<DbPluginOptions>(
  async (app, opts) => {
    app.decorate('database', opts.database);
    app.decorate('partitions', new PartitionKeeper());
    await app.partitions.ensureAhead(opts.database.db, Date.now());
    // Create next months' partitions daily so a long-running service never meets a missing month.
    const timer = setInterval(() => {
      app.partitions
        .ensureAhead(opts.database.db, Date.now())
        .catch((err: unknown) => app.log.error({ err }, 'creating readings partitions ahead failed'));
    }, 6 * 3600_000);
    timer.unref();
    app.addHook('onClose', async () => {
      clearInterval(timer);
      if (opts.closeOnShutdown) await opts.database.close();
    });
  },
  { name: 'db' },
);
