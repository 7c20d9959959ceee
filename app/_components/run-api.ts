/**
 * Browser-side calls to the runs API: JSON in, JSON out, and the API's `{ error }` thrown as an
 * ApiError carrying the status. For client components (swr fetchers and actions).
 */

export class ApiError extends Error {
  constructor(readonly status: number, message: string) {
    super(message);
    this.name = "ApiError";
  }
}

/**
 * Fetches JSON from the API with the browser's session.
 * @throws ApiError with the API's `error` text (CONTRACT.md §3) for any non-2xx answer.
 */
export async function fetchJson<T>(url: string, init?: { method?: string; body?: unknown }): Promise<T> {
  const res = await fetch(url, {
    method: init?.method ?? "GET",
    headers: init?.body !== undefined ? { "content-type": "application/json" } : undefined,
    body: init?.body !== undefined ? JSON.stringify(init.body) : undefined,
  });
  const text = await res.text();
  let data: unknown = null;
  try {
    data = text ? JSON.parse(text) : null;
  } catch {
    // not JSON: fall through with the status
  }
  if (!res.ok) {
    const error = (data as { error?: unknown } | null)?.error;
    throw new ApiError(res.status, typeof error === "string" ? error : `request failed (${res.status})`);
  }
  return data as T;
}

/** swr fetcher over fetchJson. */
export const jsonFetcher = <T,>(url: string): Promise<T> => fetchJson<T>(url);
