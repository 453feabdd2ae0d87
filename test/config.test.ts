import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../services/config.js';

describe('loadConfig', () => {
  it('fills the documented defaults from an empty environment', () => {
    expect(loadConfig({})).toEqual({
      port: 3000,
      host: '127.0.0.1',
      databaseUrl: undefined,
      pgliteDir: './data',
      adminApiKey: undefined,
      logLevel: 'info',
      maxBodyBytes: 512 * 1024 * 1024,
      maxReadingsPerRequest: 2_000_000,
      rateLimitPerMinute: 1200,
      authFailuresPerMinute: 30,
      ingestMaxAgeDays: 730,
      shutdownGraceMs: 30_000,
      dbPoolSize: 10,
      inProcessWorker: true,
      workerPollMs: 5000,
      workerLeaseMs: 120_000,
      workerBatchSize: 20,
      reportSchedule: true,
      reportWeekday: 1,
      reportHour: 6,
      reportDir: undefined,
      trustProxy: false,
      webSessionIdleMinutes: 60,
      webSessionMaxHours: 12,
    });
  });

  it('reads each variable it knows', () => {
    const config = loadConfig({
      PORT: '0',
      HOST: '0.0.0.0',
      DATABASE_URL: 'postgres://u:p@db:5432/thermocline',
      PGLITE_DIR: '/var/lib/thermocline',
      ADMIN_API_KEY: 'a-long-enough-admin-key',
      LOG_LEVEL: 'warn',
      MAX_BODY_BYTES: '1048576',
      MAX_READINGS_PER_REQUEST: '5000',
      RATE_LIMIT_PER_MINUTE: '60',
      AUTH_FAILURES_PER_MINUTE: '5',
      INGEST_MAX_AGE_DAYS: '90',
      SHUTDOWN_GRACE_MS: '5000',
      DB_POOL_SIZE: '4',
      IN_PROCESS_WORKER: 'false',
      WORKER_POLL_MS: '250',
      WORKER_LEASE_MS: '30000',
      WORKER_BATCH_SIZE: '5',
      REPORT_SCHEDULE: 'false',
      REPORT_WEEKDAY: '7',
      REPORT_HOUR: '23',
      REPORT_DIR: '/srv/reports',
      TRUST_PROXY: 'true',
      WEB_SESSION_IDLE_MINUTES: '15',
      WEB_SESSION_MAX_HOURS: '8',
    });
    expect(config).toEqual({
      port: 0,
      host: '0.0.0.0',
      databaseUrl: 'postgres://u:p@db:5432/thermocline',
      pgliteDir: '/var/lib/thermocline',
      adminApiKey: 'a-long-enough-admin-key',
      logLevel: 'warn',
      maxBodyBytes: 1_048_576,
      maxReadingsPerRequest: 5000,
      rateLimitPerMinute: 60,
      authFailuresPerMinute: 5,
      ingestMaxAgeDays: 90,
      shutdownGraceMs: 5000,
      dbPoolSize: 4,
      inProcessWorker: false,
      workerPollMs: 250,
      workerLeaseMs: 30_000,
      workerBatchSize: 5,
      reportSchedule: false,
      reportWeekday: 7,
      reportHour: 23,
      reportDir: '/srv/reports',
      trustProxy: true,
      webSessionIdleMinutes: 15,
      webSessionMaxHours: 8,
    });
  });

  it('treats an empty variable as unset', () => {
    expect(loadConfig({ PORT: '', DATABASE_URL: '', ADMIN_API_KEY: '' })).toMatchObject({
      port: 3000,
      databaseUrl: undefined,
      adminApiKey: undefined,
    });
  });

  it.each([
    ['true', true],
    ['YES', true],
    ['1', true],
    ['off', false],
    ['0', false],
  ])('reads IN_PROCESS_WORKER=%s as %s', (raw, expected) => {
    expect(loadConfig({ IN_PROCESS_WORKER: raw }).inProcessWorker).toBe(expected);
  });

  it.each([
    ['PORT', 'http'],
    ['PORT', '65536'],
    ['PORT', '3000.5'],
    ['MAX_BODY_BYTES', '10'],
    ['MAX_READINGS_PER_REQUEST', '0'],
    ['RATE_LIMIT_PER_MINUTE', '-1'],
    ['DB_POOL_SIZE', 'many'],
    ['WORKER_POLL_MS', '1'],
    ['WORKER_LEASE_MS', '1e12'],
    ['WORKER_BATCH_SIZE', '0'],
    ['IN_PROCESS_WORKER', 'maybe'],
    ['REPORT_WEEKDAY', '0'],
    ['REPORT_HOUR', '24'],
    ['REPORT_SCHEDULE', 'weekly'],
    ['LOG_LEVEL', 'verbose'],
    ['ADMIN_API_KEY', 'short'],
  ])('throws a ConfigError naming %s for the value %s', (name, value) => {
    expect(() => loadConfig({ [name]: value })).toThrow(ConfigError);
    expect(() => loadConfig({ [name]: value })).toThrow(new RegExp(`^${name} `));
  });
});
