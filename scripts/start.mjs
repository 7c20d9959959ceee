// `npm start`: set everything up on first run, then serve the web app and one worker.
import {
  ensureNodeModules, ensureLocalCluster, ensureDatabase, localUrl, localSecret, migrate, seedDemo,
  ensureBuild, startChild, stopChild, stopLocalCluster, log, startMailFake, ROOT,
} from "./lib/bootstrap.mjs";

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
const web = startChild("web", process.execPath, ["node_modules/next/dist/bin/next", "start", "-H", host, "-p", String(port)], env);
web.on("exit", (code) => {
  if (!stopping) { log(`web app exited (${code}); stopping`); shutdown(1); }
});

// The worker is restarted when it dies (a crash must not stop the lab's runs for good).
let worker;
let restarts = 0;
function spawnWorker() {
  worker = startChild("worker", process.execPath, ["--import", "tsx", "worker/index.ts"], env);
  worker.on("exit", (code, signal) => {
    if (stopping) return;
    restarts += 1;
    const delay = Math.min(30_000, 1000 * 2 ** Math.min(restarts, 5));
    log(`worker exited (${code ?? signal}); restarting in ${delay / 1000} s`);
    setTimeout(() => { if (!stopping) spawnWorker(); }, delay);
  });
}
spawnWorker();

await waitForHttp(`http://${host === "0.0.0.0" ? "127.0.0.1" : host}:${port}/api/health`, 120_000).catch((e) => {
  log(e.message);
  shutdown(1);
});
log(`ready in ${((Date.now() - started) / 1000).toFixed(1)} s`);
log(`Burstwise is at ${url}`);
log("Demo sign-ins (demo credentials, password sentinel-demo):");
log("  owner@sentinel.example · modeler@sentinel.example · reviewer@sentinel.example");
if (mail) log(`E-mail goes to the local mail fake (127.0.0.1:${mail.env.SMTP_URL.split(":").pop()}); read it at ${url}/dev/mail`);
log("Ctrl-C stops the app, the worker, the mail fake and the local PostgreSQL.");

async function shutdown(code = 0) {
  if (stopping) return;
  stopping = true;
  log("shutting down");
  await Promise.all([stopChild(web), stopChild(worker, 20_000), stopChild(mail?.child)]);
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
