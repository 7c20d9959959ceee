import { env } from "@/lib/env";

type HeaderSource = Headers | Record<string, string | string[] | undefined>;

function header(h: HeaderSource, name: string): string | undefined {
  if (h instanceof Headers) return h.get(name) ?? undefined;
  const v = h[name];
  return Array.isArray(v) ? v.join(", ") : v;
}

/**
 * The client address from an X-Forwarded-For value when `hops` trusted proxies each appended
 * the address they saw: the `hops`-th entry from the right (what the nearest proxy we trust
 * saw); entries left of it are the client's own claims and are ignored. With no trusted proxy
 * the header holds the socket address alone (Next.js fills it; scripts/client-address.cjs drops a
 * client's own), so the last entry is taken. "unknown" when there is none.
 */
export function deriveClientAddress(forwardedFor: string | undefined, hops: number): string {
  const list = (forwardedFor ?? "").split(",").map((s) => s.trim()).filter(Boolean);
  const at = list.length - Math.max(1, hops);
  const raw = list[Math.max(0, at)];
  if (!raw) return "unknown";
  // IPv4 clients of a dual-stack socket appear as ::ffff:a.b.c.d; count them as a.b.c.d.
  return raw.replace(/^::ffff:(\d+\.\d+\.\d+\.\d+)$/i, "$1").slice(0, 64).toLowerCase();
}

/** The address a request came from, for per-address limits (sign-in, sign-up). */
export function getClientAddress(headers: HeaderSource): string {
  return deriveClientAddress(header(headers, "x-forwarded-for"), env.BURSTWISE_TRUSTED_PROXY_HOPS);
}
