import { timingSafeEqual } from 'node:crypto';
import type { FastifyRequest } from 'fastify';
import type { Principal } from '../../db/api-keys-repository.js';
import type { WebSession, WebSessionsRepository } from '../../db/web-sessions-repository.js';
import { AppError } from '../errors.js';

/** The web view's session cookie: an opaque random token, HttpOnly, SameSite=Strict. */
export const SESSION_COOKIE = 'tc_session';
/** The header a state-changing request of the web view echoes its session's CSRF token in. */
export const CSRF_HEADER = 'x-csrf-token';
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);
/** The idle expiry is pushed forward at most once a minute (one write per minute of use, not per request). */
const EXTEND_STEP_MS = 60_000;

/** 403 for a state-changing request of a session without its CSRF token. */
export class CsrfError extends AppError {
  constructor() {
    super(
      403,
      'csrf_failed',
      `a state-changing request of a web-view session must send the session's CSRF token in the ${CSRF_HEADER} header`,
    );
  }
}

/** The value of cookie `name` in the request's Cookie header, if any. */
export function readCookie(request: Pick<FastifyRequest, 'headers'>, name: string): string | undefined {
  const header = request.headers.cookie;
  if (!header) return undefined;
  for (const part of header.split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === name) return part.slice(eq + 1).trim() || undefined;
  }
  return undefined;
}

/** Whether the request arrived over TLS (directly, or through a trusted proxy saying X-Forwarded-Proto: https). */
export function isSecureRequest(request: Pick<FastifyRequest, 'protocol'>): boolean {
  return request.protocol === 'https';
}

/** The Set-Cookie value that stores (or, with `token` null, clears) the session cookie. */
export function sessionCookie(token: string | null, secure: boolean, maxAgeS: number): string {
  const parts = [
    `${SESSION_COOKIE}=${token ?? ''}`,
    'Path=/',
    'HttpOnly',
    'SameSite=Strict',
    `Max-Age=${token === null ? 0 : Math.max(0, Math.floor(maxAgeS))}`,
  ];
  if (secure) parts.push('Secure');
  return parts.join('; ');
}

function sameToken(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

/** The principal a session acts as: its key's id and scopes, on the session's fleet. */
export function sessionPrincipal(session: WebSession): Principal {
  return { keyId: session.keyId, fleetId: session.fleetId, scopes: new Set(session.scopes) };
}

/**
 * The live session of the request's cookie, or undefined (no cookie, expired, signed out or
 * its key revoked). A state-changing request must carry the session's CSRF token (CsrfError
 * otherwise). Use slides the idle expiry, never past the absolute one.
 */
export async function authenticateSession(
  sessions: WebSessionsRepository,
  request: FastifyRequest,
  idleMs: number,
  nowMs: number,
): Promise<WebSession | undefined> {
  const token = readCookie(request, SESSION_COOKIE);
  if (!token) return undefined;
  const session = await sessions.find(token, nowMs);
  if (!session) return undefined;
  if (!SAFE_METHODS.has(request.method)) {
    const presented = request.headers[CSRF_HEADER];
    if (typeof presented !== 'string' || !sameToken(presented, session.csrfToken)) throw new CsrfError();
  }
  const next = Math.min(nowMs + idleMs, session.maxExpiresAt.getTime());
  if (next - session.expiresAt.getTime() >= EXTEND_STEP_MS) {
    await sessions.extend(session.sessionHash, new Date(next));
    session.expiresAt = new Date(next);
  }
  return session;
}
