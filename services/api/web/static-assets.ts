import { createHash } from 'node:crypto';
import { readdirSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { extname, join } from 'node:path';
import { gzipSync } from 'node:zlib';

/** One file of the web view, held in memory with its gzip form (the whole set is about 1.5 MB). */
export interface StaticAsset {
  body: Buffer;
  gzip: Buffer;
  type: string;
  etag: string;
}

const TYPES: Readonly<Record<string, string>> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.svg': 'image/svg+xml',
};

export const ASSETS_DIR = join(import.meta.dirname, 'assets');
/** The charting library, served from the installed package (no CDN: fleets run this on closed networks). */
export const ECHARTS_ASSET = 'vendor/echarts.min.js';

function asset(body: Buffer, type: string): StaticAsset {
  return {
    body,
    gzip: gzipSync(body, { level: 9 }),
    type,
    etag: `"${createHash('sha256').update(body).digest('base64url').slice(0, 22)}"`,
  };
}

/** The web view's files (services/api/web/assets) and echarts' dist file, by path under /app/assets/. */
export function loadStaticAssets(): Map<string, StaticAsset> {
  const out = new Map<string, StaticAsset>();
  for (const name of readdirSync(ASSETS_DIR)) {
    const type = TYPES[extname(name)];
    if (type) out.set(name, asset(readFileSync(join(ASSETS_DIR, name)), type));
  }
  const echarts = createRequire(import.meta.url).resolve('echarts/dist/echarts.min.js');
  out.set(ECHARTS_ASSET, asset(readFileSync(echarts), TYPES['.js']!));
  return out;
}

/**
 * Content-Security-Policy of the web view: scripts, styles and data only from the service
 * itself; nothing framed, no form posted elsewhere. echarts sets element styles from script
 * (CSSOM), which 'self' styles allow.
 */
export const WEB_VIEW_CSP =
  "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' data:; connect-src 'self'; " +
  "font-src 'self'; form-action 'self'; frame-ancestors 'none'; base-uri 'none'";

export const SECURITY_HEADERS: Readonly<Record<string, string>> = {
  'content-security-policy': WEB_VIEW_CSP,
  'x-content-type-options': 'nosniff',
  'referrer-policy': 'no-referrer',
  'x-frame-options': 'DENY',
};
