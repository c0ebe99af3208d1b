// The Content-Security-Policy of every response: scripts only from this origin or with the request's nonce,
// no framing, no plugins; the browser may talk to this origin and to the object store it uploads to directly.
import { randomBytes } from "node:crypto";
import { config } from "~/config.server";

export const newNonce = () => randomBytes(18).toString("base64");

/** The origin presigned upload URLs point at: the endpoint itself, or the bucket's virtual host. */
export function storageOrigin(s3: Pick<typeof config.s3, "endpoint" | "bucket" | "forcePathStyle"> = config.s3) {
  try {
    const url = new URL(s3.endpoint);
    return s3.forcePathStyle ? url.origin : `${url.protocol}//${s3.bucket}.${url.host}`;
  } catch {
    return null;
  }
}

/**
 * The policy for a response. Production: scripts need the nonce (React Router's inline hydration and
 * scroll-restoration scripts carry it). Styles: stylesheets only from here, but style attributes are
 * allowed, because libraries render them (docs/decisions/006-content-security-policy.md). Development
 * (Vite's hot reload injects inline scripts and a WebSocket) keeps scripts looser.
 */
export function contentSecurityPolicy(nonce: string, options: { development?: boolean; storage?: string | null } = {}) {
  const storage = options.storage === undefined ? storageOrigin() : options.storage;
  const dev = options.development ?? false;
  const directives: Record<string, string[]> = {
    "default-src": ["'self'"],
    "script-src": dev ? ["'self'", "'unsafe-inline'"] : ["'self'", `'nonce-${nonce}'`],
    "style-src": ["'self'", "'unsafe-inline'"],
    "style-src-elem": dev ? ["'self'", "'unsafe-inline'"] : ["'self'"],
    "style-src-attr": ["'unsafe-inline'"],
    "img-src": ["'self'", "data:", "blob:"],
    "font-src": ["'self'"],
    "connect-src": ["'self'", ...(storage ? [storage] : []), ...(dev ? ["ws:", "wss:"] : [])],
    "object-src": ["'none'"],
    "base-uri": ["'self'"],
    "form-action": ["'self'"],
    "frame-ancestors": ["'none'"],
  };
  return Object.entries(directives)
    .map(([name, values]) => `${name} ${values.join(" ")}`)
    .join("; ");
}
