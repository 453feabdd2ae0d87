/**
 * Configuration, read and validated once from the environment into one typed object.
 * Nothing else in the code base reads `process.env`.
 */
export interface Config {
  /** TCP port of the HTTP API. */
  port: number;
  host: string;
  /** Postgres connection string; undefined selects the embedded PGlite database. */
  databaseUrl: string | undefined;
  /** Directory of the embedded database (used only without `databaseUrl`). */
  pgliteDir: string;
  /** Bootstrap admin key: created (hashed) at start if not present. */
  adminApiKey: string | undefined;
  logLevel: string;
  /** Largest accepted request body after decompression, bytes. */
  maxBodyBytes: number;
  /** Largest number of readings in one request. */
  maxReadingsPerRequest: number;
  /** Requests per minute per API key. */
  rateLimitPerMinute: number;
  /** Failed authentications per minute from one client address before it is answered 429. */
  authFailuresPerMinute: number;
  /** Readings older than this many days are rejected one by one (bounds the partitions a body can create). */
  ingestMaxAgeDays: number;
  /** How long SIGTERM waits for requests in flight before the process exits anyway, ms. */
  shutdownGraceMs: number;
  /** pg pool size. */
  dbPoolSize: number;
  /** Run the analysis worker inside the API process. */
  inProcessWorker: boolean;
  /** How often an idle worker polls the analysis queue, ms. */
  workerPollMs: number;
  /** How long a worker's lease on a vehicle lasts, ms. */
  workerLeaseMs: number;
  /** Vehicles leased per worker batch. */
  workerBatchSize: number;
  /** Build weekly reports on schedule inside the worker. */
  reportSchedule: boolean;
  /** ISO weekday the weekly report is built on (1 = Monday … 7 = Sunday), fleet time zone. */
  reportWeekday: number;
  /** Local hour (0–23) from which the weekly report is built. */
  reportHour: number;
  /** Also write scheduled reports as files here (default: archived in the database only). */
  reportDir: string | undefined;
  /** Behind a reverse proxy: trust its X-Forwarded-* headers (client address, https for the Secure cookie). */
  trustProxy: boolean;
  /** A web-view session ends after this many minutes without a request. */
  webSessionIdleMinutes: number;
  /** A web-view session ends this many hours after sign-in, however busy. */
  webSessionMaxHours: number;
}

export class ConfigError extends Error {
  override name = 'ConfigError';
}

function int(env: NodeJS.ProcessEnv, name: string, fallback: number, min: number, max: number): number {
  const raw = env[name];
  if (raw === undefined || raw === '') return fallback;
  const value = Number(raw);
  if (!Number.isInteger(value) || value < min || value > max) {
    throw new ConfigError(`${name} must be an integer from ${min} to ${max}, got '${raw}'`);
  }
  return value;
}

function bool(env: NodeJS.ProcessEnv, name: string, fallback: boolean): boolean {
  const raw = env[name];
  if (raw === undefined || raw === '') return fallback;
  if (/^(1|true|yes|on)$/i.test(raw)) return true;
  if (/^(0|false|no|off)$/i.test(raw)) return false;
  throw new ConfigError(`${name} must be true or false, got '${raw}'`);
}

const LOG_LEVELS = new Set(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']);

/** Reads the configuration; throws ConfigError with the variable's name on a bad value. */
export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const logLevel = env.LOG_LEVEL || 'info';
  if (!LOG_LEVELS.has(logLevel)) throw new ConfigError(`LOG_LEVEL must be one of ${[...LOG_LEVELS].join(', ')}`);
  const adminApiKey = env.ADMIN_API_KEY || undefined;
  if (adminApiKey !== undefined && adminApiKey.length < 16) {
    throw new ConfigError('ADMIN_API_KEY must be at least 16 characters');
  }
  return {
    port: int(env, 'PORT', 3000, 0, 65535),
    host: env.HOST || '127.0.0.1',
    databaseUrl: env.DATABASE_URL || undefined,
    pgliteDir: env.PGLITE_DIR || './data',
    adminApiKey,
    logLevel,
    maxBodyBytes: int(env, 'MAX_BODY_BYTES', 512 * 1024 * 1024, 1024, 8 * 1024 * 1024 * 1024),
    maxReadingsPerRequest: int(env, 'MAX_READINGS_PER_REQUEST', 2_000_000, 1, 100_000_000),
    rateLimitPerMinute: int(env, 'RATE_LIMIT_PER_MINUTE', 1200, 1, 10_000_000),
    authFailuresPerMinute: int(env, 'AUTH_FAILURES_PER_MINUTE', 30, 1, 10_000_000),
    ingestMaxAgeDays: int(env, 'INGEST_MAX_AGE_DAYS', 730, 1, 36_500),
    shutdownGraceMs: int(env, 'SHUTDOWN_GRACE_MS', 30_000, 100, 3_600_000),
    dbPoolSize: int(env, 'DB_POOL_SIZE', 10, 1, 1000),
    inProcessWorker: bool(env, 'IN_PROCESS_WORKER', true),
    workerPollMs: int(env, 'WORKER_POLL_MS', 5000, 50, 3_600_000),
    workerLeaseMs: int(env, 'WORKER_LEASE_MS', 120_000, 1000, 86_400_000),
    workerBatchSize: int(env, 'WORKER_BATCH_SIZE', 20, 1, 10_000),
    reportSchedule: bool(env, 'REPORT_SCHEDULE', true),
    reportWeekday: int(env, 'REPORT_WEEKDAY', 1, 1, 7),
    reportHour: int(env, 'REPORT_HOUR', 6, 0, 23),
    reportDir: env.REPORT_DIR || undefined,
    trustProxy: bool(env, 'TRUST_PROXY', false),
    webSessionIdleMinutes: int(env, 'WEB_SESSION_IDLE_MINUTES', 60, 1, 7 * 24 * 60),
    webSessionMaxHours: int(env, 'WEB_SESSION_MAX_HOURS', 12, 1, 24 * 30),
  };
}
