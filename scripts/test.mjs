// `npm test`: set up what the suites need (PostgreSQL, Chromium, dependencies, a throwaway
// database, a built app served on a spare port), run every suite, clean up, exit non-zero on failure.
import { spawn, spawnSync } from "node:child_process";
import {
  ensureNodeModules, ensureLocalCluster, ensureChromium, ensureDebianPackages, ensureDatabase, dropDatabase, localUrl, migrate,
  seedDemo, ensureBuild, startChild, stopChild, stopLocalCluster, log, ROOT, freePort, startMailFake,
} from "./lib/bootstrap.mjs";

const started = Date.now();
const port = Number(process.env.BURSTWISE_TEST_PORT ?? 3100);
const extraArgs = process.argv.slice(2); // e.g. `npm test -- --project unit`

ensureNodeModules();
const chromium = ensureChromium();
// libSBML's Perl binding checks the SBML we write (CONTRACT.md: it passes libSBML's consistency checks).
ensureDebianPackages(["libsbml5-perl"]);
const startedPg = ensureLocalCluster();
const dbName = `burstwise_test_${process.pid}`;
ensureDatabase(dbName);
const databaseUrl = localUrl(dbName);
let web;
let mail;
let code = 1;
let typecheckFailed = false;
try {
  migrate(databaseUrl);
  seedDemo(databaseUrl);
  ensureBuild();
  // Type-check every project on a full run (the root one covers the app, lib, the worker,
  // migrations and seeds, which an unchanged app's skipped build would not), after the build so that
  // Next's generated route types are current; a type error fails `npm test`.
  typecheckFailed = extraArgs.length === 0 && !typecheck(["tsconfig.json", "ssa/tsconfig.json", "cli/tsconfig.json", "tests/tsconfig.json"]);
  const baseUrl = `http://127.0.0.1:${port}`;
  // The command line's bundle, built once here rather than by the first of many CLI tests at once.
  await (await import("./lib/engine-bundle.mjs")).engineBundle();
  // The mail fake on a spare port (side-by-side test runs must not share an inbox).
  mail = await startMailFake(databaseUrl, Number(process.env.MAIL_FAKE_PORT ?? (await freePort())));
  const env = {
    DATABASE_URL: databaseUrl, NEXTAUTH_SECRET: "test-secret-not-for-production", NEXTAUTH_URL: baseUrl, NODE_ENV: "production", ...mail.env,
    BURSTWISE_DEPLOYMENT: "local",
    // The suites play the trusted proxy: a test names its client address in X-Forwarded-For
    // (tests/support/client.ts), so per-address limits can be shown to bite without locking out
    // every other test, which all come from 127.0.0.1.
    BURSTWISE_TRUSTED_PROXY_HOPS: "1",
    NODE_OPTIONS: `${process.env.NODE_OPTIONS ?? ""} --require "${ROOT}/scripts/client-address.cjs"`.trim(),
  };
  web = startChild("web", process.execPath, ["node_modules/next/dist/bin/next", "start", "-H", "127.0.0.1", "-p", String(port)], env);
  await waitForHttp(`${baseUrl}/api/health`, 60_000);
  log(`suites starting (${((Date.now() - started) / 1000).toFixed(0)} s of setup)`);
  // Asynchronous, so this process keeps reading the web app's and the mail fake's output while the
  // suites run: a blocked reader would leave their pipes full and stall their next log line.
  const vitest = spawn(process.execPath, ["node_modules/vitest/vitest.mjs", "run", ...extraArgs], {
    cwd: ROOT, stdio: "inherit",
    env: { ...process.env, ...env, NODE_ENV: "test", BURSTWISE_REQUIRE_LIBSBML: "1", TEST_DATABASE_URL: databaseUrl, BURSTWISE_TEST_URL: baseUrl, CHROMIUM_PATH: chromium },
  });
  code = await new Promise((done) => {
    vitest.once("error", (e) => { console.error(`[burstwise] could not start vitest: ${e.message}`); done(1); });
    vitest.once("exit", (status) => done(status ?? 1));
  });
  if (typecheckFailed && code === 0) code = 1;
} catch (e) {
  console.error(`[burstwise] test setup failed: ${e.message}`);
} finally {
  await Promise.all([stopChild(web), stopChild(mail?.child)]);
  try { dropDatabase(dbName); } catch (e) { log(`could not drop ${dbName}: ${e.message}`); }
  if (startedPg) stopLocalCluster();
}
log(`npm test finished in ${((Date.now() - started) / 1000).toFixed(0)} s with exit code ${code}`);
process.exit(code);

/** `tsc --noEmit -p` for each project; true when all pass (errors are printed). */
function typecheck(projects) {
  const t0 = Date.now();
  let ok = true;
  for (const p of projects) {
    const r = spawnSync(process.execPath, ["node_modules/typescript/bin/tsc", "--noEmit", "-p", p], { cwd: ROOT, stdio: "inherit" });
    if (r.status !== 0) {
      log(`type check of ${p} failed`);
      ok = false;
    }
  }
  log(`type check of ${projects.join(", ")}: ${ok ? "passed" : "FAILED"} in ${((Date.now() - t0) / 1000).toFixed(0)} s`);
  return ok;
}

async function waitForHttp(url, timeoutMs) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    try {
      const res = await fetch(url);
      if (res.ok) return;
    } catch { /* not up yet */ }
    await new Promise((r) => setTimeout(r, 300));
  }
  throw new Error(`${url} did not answer within ${timeoutMs / 1000} s`);
}
