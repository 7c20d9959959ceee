/** JSON from our API for swr; a failed request throws the API's `field: reason` message. */
export async function fetchJson<T>(url: string): Promise<T> {
  const res = await fetch(url, { headers: { accept: "application/json" } });
  const body = (await res.json().catch(() => null)) as (T & { error?: string }) | null;
  if (!res.ok || body === null) throw new Error(body?.error ?? `request failed (${res.status})`);
  return body;
}

/** The API's JSON shapes these pages read (CONTRACT.md §2–3). */
export interface CountsJson {
  omega: number;
  omega_unit: string;
  volume_fL: number | null;
  amount_unit: string;
  time_unit: string;
  species: { id: string; initial: number; unit: string; molecules: number; count: number }[];
  constants: {
    reaction: string; law: string; name: string; value: number | null; unit: string; parameter: string | null;
    molecules: number | null; molecules_unit: string; note: string | null;
  }[];
}

export type { AnalysisJson } from "@/lib/view/run-view";
