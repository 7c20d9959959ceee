/**
 * Display helpers for the circuit pages, identical on server and client (no locale or time zone
 * of the browser, so a server-rendered page hydrates without differences).
 */

/** `2025-03-04T14:05:09Z` → "2025-03-04 14:05 UTC"; null → "—". */
export function formatWhen(value: string | Date | null | undefined): string {
  if (!value) return "—";
  const d = typeof value === "string" ? new Date(value) : value;
  if (Number.isNaN(d.getTime())) return "—";
  return `${d.toISOString().slice(0, 16).replace("T", " ")} UTC`;
}

/** A number with `digits` significant digits, without trailing zeros; null or NaN → "—". */
export function formatNumber(x: number | null | undefined, digits = 4): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  if (x === 0) return "0";
  const abs = Math.abs(x);
  if (abs >= 1e6 || abs < 1e-4) return x.toExponential(digits - 1).replace(/\.?0+e/, "e");
  return String(Number(x.toPrecision(digits)));
}

/** Amount units as people write them (µM rather than uM). */
export const showAmount = (unit: string): string => (unit === "uM" ? "µM" : unit);

/** A circuit name as a file-name stem: "Ring timer, design R2" → "ring-timer-design-r2". */
export const fileSlug = (name: string): string =>
  name.toLowerCase().normalize("NFKD").replace(/[^a-z0-9]+/g, "-").replace(/^-+|-+$/g, "").slice(0, 60) || "circuit";
