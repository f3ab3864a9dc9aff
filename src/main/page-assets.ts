// The page's own files and its content security policy, as both shells serve them: the browser
// host over HTTP and the desktop window through its app scheme.
import { readFile } from 'node:fs/promises';
import { extname, isAbsolute, relative, resolve, sep } from 'node:path';

/**
 * The page's content security policy: its own files only, no inline script or style, no plugins,
 * no forms, never framed. `imageSources` adds where else images may come from (the desktop's frame
 * scheme).
 */
export function buildContentSecurityPolicy(imageSources: readonly string[] = []): string {
  return [
    "default-src 'self'",
    ['img-src', "'self'", 'data:', 'blob:', ...imageSources].join(' '),
    "style-src 'self'",
    "script-src 'self'",
    "connect-src 'self'",
    "object-src 'none'",
    "base-uri 'none'",
    "form-action 'none'",
    "frame-ancestors 'none'",
  ].join('; ');
}

const contentTypes: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.json': 'application/json',
  '.woff2': 'font/woff2',
};

/**
 * The file under `root` that a request's path (as sent, still percent-encoded) names, or null when
 * it names none that may be served. Refused: encoded slashes and backslashes (a name must not hide
 * a folder step), bad percent-encoding, NUL and backslashes once decoded, empty segments, any
 * segment starting with a dot ('.', '..' and hidden files alike), and anything resolving outside
 * `root`. '/' is the page; '/favicon.ico', which browsers ask for whatever the page links, is its
 * own icon.
 */
export function resolveAsset(root: string, requestPath: string): string | null {
  const path = requestPath === '/' ? '/index.html' : requestPath === '/favicon.ico' ? '/favicon.svg' : requestPath;
  if (!path.startsWith('/') || /%(2f|5c)/i.test(path)) return null;
  let decoded: string;
  try {
    decoded = decodeURIComponent(path.slice(1));
  } catch {
    return null;
  }
  if (decoded.includes('\0') || decoded.includes('\\')) return null;
  const segments = decoded.split('/');
  if (segments.some((s) => s === '' || s.startsWith('.'))) return null;
  const target = resolve(root, ...segments);
  const rel = relative(resolve(root), target);
  if (rel === '' || rel.startsWith('..') || isAbsolute(rel)) return null;
  return target;
}

/** A file of the page and its content type, or null when the path is refused or names no readable file. */
export async function readAsset(root: string, requestPath: string): Promise<{ body: Buffer; type: string; name: string } | null> {
  const target = resolveAsset(root, requestPath);
  if (target === null) return null;
  try {
    const body = await readFile(target);
    return { body, type: contentTypes[extname(target)] ?? 'application/octet-stream', name: relative(resolve(root), target).split(sep).join('/') };
  } catch {
    return null;
  }
}
