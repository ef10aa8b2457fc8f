import { getEnv } from "./env.server.ts";

// Security headers for every response. The Content-Security-Policy allows scripts only from our
// own origin or with this request's nonce; styles may be inline (chart libraries set style
// attributes); the browser may connect to our origin and to the S3 endpoint for presigned uploads.
export function applySecurityHeaders(headers: Headers, options: { nonce?: string; document: boolean }) {
  headers.set("X-Content-Type-Options", "nosniff");
  headers.set("Referrer-Policy", "same-origin");
  headers.set("X-Frame-Options", "DENY");
  headers.set("Cross-Origin-Opener-Policy", "same-origin");
  headers.set("Permissions-Policy", "camera=(), microphone=(), geolocation=()");
  if (!options.document) return;
  const env = getEnv();
  const s3 = env.S3_PUBLIC_ENDPOINT ?? env.S3_ENDPOINT;
  const s3Origin = s3 ? new URL(s3).origin : "https://*.amazonaws.com";
  const dev = env.NODE_ENV === "development";
  const policy = [
    "default-src 'self'",
    `script-src 'self'${options.nonce ? ` 'nonce-${options.nonce}'` : ""}${dev ? " 'unsafe-inline'" : ""}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self'",
    `connect-src 'self' ${s3Origin}${dev ? " ws: wss:" : ""}`,
    "frame-src 'self'",
    "frame-ancestors 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "object-src 'none'",
  ].join("; ");
  headers.set("Content-Security-Policy", policy);
}
