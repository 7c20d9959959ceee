/**
 * The cross-site request forgery check for every state-changing request (proxy.ts runs it for all
 * of /api, next-auth's own routes included). Pure: headers in, a refusal message or null out.
 */

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/** The origin (scheme://host:port) of a URL, or null when it is not one. */
function originOf(url: string): string | null {
  try {
    const o = new URL(url).origin;
    return o === "null" ? null : o;
  } catch {
    return null;
  }
}

/**
 * Why a state-changing request must be refused as cross-site (`origin: …`), or null when it may
 * proceed. A browser says where a request comes from in Origin (sent on every POST, PUT, PATCH
 * and DELETE by current browsers), else in Sec-Fetch-Site, else in Referer; a request with none of
 * them comes from a script or the command line, where no other site can have made it.
 * @param appOrigin the app's own origin, e.g. `https://burstwise.example.org`.
 */
export function describeCrossSiteWrite(method: string, headers: Headers, appOrigin: string): string | null {
  if (SAFE_METHODS.has(method.toUpperCase())) return null;
  // API tokens: a page on another site cannot attach an Authorization header without a CORS
  // preflight, which this app never grants, so such a request is not a forgery.
  if (headers.has("authorization")) return null;
  const origin = headers.get("origin");
  if (origin !== null) {
    if (origin === appOrigin) return null;
    const from = origin === "null" ? "an opaque origin (a sandboxed frame or a redirect)" : origin;
    return `origin: a request from ${from} may not change anything here; only pages of ${appOrigin} may`;
  }
  const site = headers.get("sec-fetch-site");
  if (site !== null) {
    if (site === "same-origin" || site === "none") return null;
    return `origin: a ${site} request may not change anything here; only pages of ${appOrigin} may`;
  }
  const referer = headers.get("referer");
  if (referer) {
    const from = originOf(referer);
    if (from === appOrigin) return null;
    return `origin: a request from ${from ?? "an unknown page"} may not change anything here; only pages of ${appOrigin} may`;
  }
  return null;
}

/** The app's own origin: NEXTAUTH_URL's when set (the public address), else the request's. */
export function appOriginFor(configuredUrl: string | undefined, requestOrigin: string): string {
  return (configuredUrl && originOf(configuredUrl)) || requestOrigin;
}
