// `npm start`: set everything up on first run, then serve the web app and one worker.
import {
  ensureNodeModules, ensureLocalCluster, ensureDatabase, localUrl, localSecret, migrate, seedDemo,
  ensureBuild, startChild, stopChild, stopLocalCluster, log, startMailFake, ROOT,
} from "./lib/bootstrap.mjs";
import { superviseChild } from "./lib/supervise.mjs";

// A production deployment never runs the local mail fake (its inbox is a web page): it needs a
// real mail server, and says so before anything is set up.
const deployment = process.env.BURSTWISE_DEPLOYMENT ?? "local";
if (!["local", "production"].includes(deployment)) {
  log(`BURSTWISE_DEPLOYMENT must be local or production, not "${deployment}"`);
  process.exit(1);
}
if (deployment === "production" && !process.env.SMTP_URL) {
  log("BURSTWISE_DEPLOYMENT=production needs SMTP_URL (a real mail server); the local mail fake never runs in production");
  process.exit(1);
}

const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? "127.0.0.1";
const started = Date.now();

ensureNodeModules();
let startedPg = false;
let databaseUrl = process.env.DATABASE_URL;
if (databaseUrl) {
  log("DATABASE_URL is set: using that database, no local PostgreSQL is started");
} else {
  startedPg = ensureLocalCluster();
  ensureDatabase("burstwise");
  databaseUrl = localUrl("burstwise");
}
migrate(databaseUrl);
seedDemo(databaseUrl);
ensureBuild();

const url = process.env.NEXTAUTH_URL ?? `http://${host}:${port}`;
const env = {
  DATABASE_URL: databaseUrl, NEXTAUTH_SECRET: process.env.NEXTAUTH_SECRET ?? localSecret(), NEXTAUTH_URL: url, NODE_ENV: "production",
  BURSTWISE_DEPLOYMENT: deployment,
  // Drops a client's own X-Forwarded-For unless a trusted proxy is configured (per-address limits).
  NODE_OPTIONS: `${process.env.NODE_OPTIONS ?? ""} --require "${ROOT}/scripts/client-address.cjs"`.trim(),
};

let stopping = false;
// Without a real SMTP server (SMTP_URL), e-mail goes to the local mail fake, read at /dev/mail.
let mail;
if (process.env.SMTP_URL) {
  log("SMTP_URL is set: e-mail goes to that server, no mail fake is started");
} else {
  const mailPort = Number(process.env.MAIL_FAKE_PORT ?? 2525);
  try {
    mail = await startMailFake(databaseUrl, mailPort);
    Object.assign(env, mail.env);
  } catch (e) {
    log(`${e.message}; continuing without e-mail`);
  }
}
// The web app and the worker are each restarted when they die, with a growing delay; neither's
// crash stops the other, the mail fake or PostgreSQL. The web app gets a heap limit, so that a
// runaway request ends it quickly (and it comes back) instead of growing until the machine swaps.
const webHeapMb = Number(process.env.BURSTWISE_WEB_HEAP_MB ?? 1536);
if (!(Number.isInteger(webHeapMb) && webHeapMb >= 256)) {
  log(`BURSTWISE_WEB_HEAP_MB must be an integer of at least 256 (MB), got "${process.env.BURSTWISE_WEB_HEAP_MB}"`);
  process.exit(2);
}
const webEnv = { ...env, NODE_OPTIONS: `${env.NODE_OPTIONS} --max-old-space-size=${webHeapMb}`.trim() };
const web = superviseChild({
  name: "web app", log, baseDelayMs: 1000,
  start: () => startChild("web", process.execPath, ["node_modules/next/dist/bin/next", "start", "-H", host, "-p", String(port)], webEnv),
  onStart: (child, n) => { if (n > 1) log(`web app restarted (pid ${child.pid})`); },
});
const worker = superviseChild({
  name: "worker", log, baseDelayMs: 2000,
  start: () => startChild("worker", process.execPath, ["--import", "tsx", "worker/index.ts"], env),
});

await waitForHttp(`http://${host === "0.0.0.0" ? "127.0.0.1" : host}:${port}/api/health`, 120_000).catch((e) => {
  log(e.message);
  shutdown(1);
});
log(`ready in ${((Date.now() - started) / 1000).toFixed(1)} s`);
log(`Burstwise is at ${url}`);
log("Demo sign-ins (demo credentials, password sentinel-demo):");
log("  owner@sentinel.example · modeler@sentinel.example · reviewer@sentinel.example");
if (mail) log(`E-mail goes to the local mail fake (127.0.0.1:${mail.env.SMTP_URL.split(":").pop()}); read it at ${url}/dev/mail`);
log(`web app pid ${web.child.pid}, worker pid ${worker.child.pid}; each is restarted if it exits`);
log("Ctrl-C stops the app, the worker, the mail fake and the local PostgreSQL.");

async function shutdown(code = 0) {
  if (stopping) return;
  stopping = true;
  log("shutting down");
  await Promise.all([web.stop((c) => stopChild(c)), worker.stop((c) => stopChild(c, 20_000)), stopChild(mail?.child)]);
  if (startedPg) stopLocalCluster();
  process.exit(code);
}
process.on("SIGINT", () => shutdown(0));
process.on("SIGTERM", () => shutdown(0));

async function waitForHttp(target, timeoutMs) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until && !stopping) {
    try {
      if ((await fetch(target)).ok) return;
    } catch { /* not up yet */ }
    await new Promise((r) => setTimeout(r, 250));
  }
  if (!stopping) throw new Error(`${target} did not answer within ${timeoutMs / 1000} s`);
}
