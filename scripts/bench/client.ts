// What the service benchmarks share: a throwaway stack (database with the demo seed, the built
// app, one worker), a cookie-keeping client, waiting for the app to answer, and signing in as the
// demo modeler (CONTRACT.md §3 demo credentials).
import {
  dropDatabase, ensureBuild, ensureDatabase, ensureLocalCluster, localUrl, migrate, psql, seedDemo, startChild, stopChild, stopLocalCluster,
} from "../lib/bootstrap.mjs";

export type BenchCall = (method: string, path: string, body?: unknown, form?: URLSearchParams) => Promise<{ status: number; text: string; json: any }>;

/** A client for the app at `base` that keeps its session cookies between calls. */
export function benchClient(base: string): BenchCall {
  const cookies = new Map<string, string>();
  return async (method, path, body, form) => {
    const headers: Record<string, string> = { cookie: [...cookies].map(([k, v]) => `${k}=${v}`).join("; ") };
    if (body) headers["content-type"] = "application/json";
    if (form) headers["content-type"] = "application/x-www-form-urlencoded";
    const res = await fetch(base + path, { method, headers, body: form ?? (body ? JSON.stringify(body) : undefined), redirect: "manual" });
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(";");
      const i = pair!.indexOf("=");
      cookies.set(pair!.slice(0, i), pair!.slice(i + 1));
    }
    const text = await res.text();
    return { status: res.status, text, json: (() => { try { return JSON.parse(text); } catch { return null; } })() };
  };
}

/** Waits until the app answers its health check, then signs in as the demo modeler; the demo lab's id. */
export async function signInDemoModeler(base: string, call: BenchCall): Promise<string> {
  for (let i = 0; i < 200; i++) {
    try { if ((await fetch(`${base}/api/health`)).ok) break; } catch { /* starting */ }
    await new Promise((r) => setTimeout(r, 250));
  }
  const csrf = await call("GET", "/api/auth/csrf");
  await call("POST", "/api/auth/callback/credentials", undefined,
    new URLSearchParams({ csrfToken: csrf.json.csrfToken, email: "modeler@sentinel.example", password: "sentinel-demo", json: "true" }));
  return (await call("GET", "/api/labs")).json.labs[0].id;
}

export const median = (xs: number[]) => { const s = [...xs].sort((a, b) => a - b); return s[Math.floor(s.length / 2)]!; };

export interface BenchStack {
  /** The demo modeler's lab (signed in through `call`). */
  lab: { id: string };
  /** One SQL query against the bench database, its output as text. */
  q: (sql: string) => string;
  /** Stops the worker and the app, drops the database, and stops PostgreSQL if this started it. */
  stop: () => Promise<void>;
}

/**
 * A throwaway database `dbName` (migrated, demo seed), the built app on `port` and one worker
 * running two chunks at once, with `call` signed in as the demo modeler.
 */
export async function startBenchStack(dbName: string, port: number, call: BenchCall): Promise<BenchStack> {
  const startedPg = ensureLocalCluster();
  dropDatabase(dbName);
  ensureDatabase(dbName);
  const databaseUrl = localUrl(dbName);
  migrate(databaseUrl);
  seedDemo(databaseUrl);
  ensureBuild();
  const base = `http://127.0.0.1:${port}`;
  const env = { DATABASE_URL: databaseUrl, NEXTAUTH_SECRET: "bench", NEXTAUTH_URL: base, NODE_ENV: "production" };
  const web = startChild("web", process.execPath, ["node_modules/next/dist/bin/next", "start", "-H", "127.0.0.1", "-p", String(port)], env);
  const worker = startChild("worker", process.execPath, ["--import", "tsx", "worker/index.ts"], { ...env, WORKER_CONCURRENCY: "2" });
  const stop = async () => {
    await stopChild(worker);
    await stopChild(web);
    dropDatabase(dbName);
    if (startedPg) stopLocalCluster();
  };
  try {
    return { lab: { id: await signInDemoModeler(base, call) }, q: (sql: string) => psql(sql, dbName), stop };
  } catch (e) {
    await stop();
    throw e;
  }
}
