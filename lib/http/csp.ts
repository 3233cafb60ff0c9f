// The Content-Security-Policy of Rillbook's pages and API answers (set by proxy.ts).

/** The bucket's origins as the browser meets them in presigned URLs (path-style, or the bucket as a subdomain). */
export function bucketOrigins(opts: {
  s3Endpoint: string;
  bucket: string;
  forcePathStyle: boolean;
}): string[] {
  const endpoint = new URL(opts.s3Endpoint);
  if (opts.forcePathStyle) return [endpoint.origin];
  return [endpoint.origin, `${endpoint.protocol}//${opts.bucket}.${endpoint.host}`];
}

/**
 * A page's policy. Scripts run only with this request's nonce (Next.js puts it on its own
 * scripts when it finds it in the request's policy; 'strict-dynamic' lets those load the
 * app's chunks). The browser talks to one other origin, the bucket: presigned uploads and
 * ranged reads for listening (connect-src), playback (media-src). Styles allow inline
 * `style` attributes: plots and progress bars size themselves with them, and a style
 * cannot run code. 'wasm-unsafe-eval' lets the bench hash an upload's SHA-256 in
 * WebAssembly (hash-wasm) without allowing eval of JavaScript. Nothing may frame a page (frame-ancestors), which stops clickjacking of
 * the approve, return, role and deactivate buttons. React's development build evaluates
 * strings, so 'unsafe-eval' is there under `next dev` only.
 */
export function pagePolicy(opts: {
  nonce: string;
  development: boolean;
  bucketOrigins: string[];
  https: boolean;
}): string {
  const bucket = opts.bucketOrigins.join(" ");
  const directives = [
    "default-src 'self'",
    `script-src 'self' 'nonce-${opts.nonce}' 'strict-dynamic' 'wasm-unsafe-eval'${opts.development ? " 'unsafe-eval'" : ""}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self' data:",
    `connect-src 'self' ${bucket}`,
    `media-src 'self' blob: ${bucket}`,
    "worker-src 'self' blob:",
    "object-src 'none'",
    "base-uri 'none'",
    "form-action 'self'",
    "frame-ancestors 'none'",
    ...(opts.https ? ["upgrade-insecure-requests"] : []),
  ];
  return directives.join("; ");
}

/** An API answer is data, never a document: it may load nothing and be framed by nobody. */
export const apiPolicy = "default-src 'none'; frame-ancestors 'none'";

/** A fresh nonce for each page: 16 random bytes, base64. */
export function newNonce(): string {
  const bytes = new Uint8Array(16);
  crypto.getRandomValues(bytes);
  return btoa(String.fromCharCode(...bytes));
}
