// Pure: used by the sign-in page, next-auth's redirect callback and client forms.

// Any origin works for resolving; only "does the target stay on it" matters.
const PROBE_ORIGIN = "http://burstwise.invalid";

/**
 * The same-origin path (with query and hash) a redirect `target` from a request may go to, or
 * `fallback`. The target is resolved the way a browser would (a backslash counts as a slash, tabs
 * and newlines vanish), so `/\evil.example`, `/\t/evil.example`, `//evil.example` and
 * `https://evil.example` all leave the site and fall back. `origin` is the app's own, for
 * absolute targets that point at it.
 */
export function toSafeRedirect(target: unknown, fallback = "/labs", origin = PROBE_ORIGIN): string {
  if (typeof target !== "string" || target === "" || target.length > 2048) return fallback;
  let base: URL;
  let url: URL;
  try {
    base = new URL(origin);
    url = new URL(target, base);
  } catch {
    return fallback;
  }
  if (url.origin !== base.origin) return fallback;
  const path = `${url.pathname}${url.search}${url.hash}`;
  // "/.//evil.example" resolves on our origin to the path "//evil.example", which a browser
  // given just the path would read as another host.
  if (!path.startsWith("/") || path.startsWith("//") || path.startsWith("/\\")) return fallback;
  return path;
}
