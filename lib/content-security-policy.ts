/**
 * The content security policies proxy.ts sends. Pages allow scripts of this origin and those
 * carrying the request's nonce (Next.js marks its own inline scripts with it); no 'unsafe-eval',
 * so the charts run vega's expression interpreter instead of compiling code (vega-chart.tsx).
 */

/**
 * The policy of a page answer. Styles keep 'unsafe-inline': React style props and vega's SVG set
 * style attributes, and inline styles cannot run code. Development adds 'unsafe-eval', which
 * React's development build needs for its call stacks.
 */
export function buildPagePolicy(nonce: string, isDevelopment = false): string {
  return [
    "default-src 'self'",
    `script-src 'self' 'nonce-${nonce}'${isDevelopment ? " 'unsafe-eval'" : ""}`,
    "style-src 'self' 'unsafe-inline'",
    // data: and blob: for the PNG and SVG downloads the charts make in the browser.
    "img-src 'self' data: blob:",
    "font-src 'self'",
    "connect-src 'self'",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ].join("; ");
}

/** The policy of an API answer or a redirect: nothing in it may load or run anything. */
export const NOTHING_POLICY = "default-src 'none'; base-uri 'none'; form-action 'none'; frame-ancestors 'none'";

/** A fresh nonce: 128 random bits, base64 (CSP3 §2.3.1 wants at least 128). */
export function createNonce(): string {
  const bytes = crypto.getRandomValues(new Uint8Array(16));
  return btoa(String.fromCharCode(...bytes));
}
