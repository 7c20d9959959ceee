// Bootstrap shared by `npm start`, `npm test` and `npm run worker`.
// Plain Node (no dependencies): it must run on a fresh clone before `npm ci`.
import { spawnSync, spawn } from "node:child_process";
import { createHash, randomBytes } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, writeFileSync, readdirSync, statSync, chmodSync, rmSync, renameSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { userInfo } from "node:os";
import { createServer, connect } from "node:net";

export const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), "..", "..");
export const LOCAL = join(ROOT, ".local");
export const PG_DIR = join(LOCAL, "pg");
export const PG_DATA = join(PG_DIR, "data");
export const PG_SOCK = join(PG_DIR, "sock");
export const PG_PORT = Number(process.env.BURSTWISE_PG_PORT ?? 55432);
export const DIST_DIR = process.env.BURSTWISE_DIST_DIR ?? ".next";
export const IS_ROOT = process.getuid?.() === 0;

const quietEnv = { ...process.env, NEXT_TELEMETRY_DISABLED: "1", DEBIAN_FRONTEND: "noninteractive" };

export function log(msg) {
  process.stdout.write(`[burstwise] ${msg}\n`);
}

/** Runs a command to completion, streaming its output; throws on a non-zero exit. */
export function run(cmd, args, opts = {}) {
  const r = spawnSync(cmd, args, { stdio: opts.quiet ? "pipe" : "inherit", cwd: ROOT, env: { ...quietEnv, ...(opts.env ?? {}) } });
  if (r.error) throw r.error;
  if (r.status !== 0) {
    const detail = opts.quiet ? `\n${r.stdout?.toString() ?? ""}${r.stderr?.toString() ?? ""}` : "";
    throw new Error(`${cmd} ${args.join(" ")} exited with ${r.status}${detail}`);
  }
  return r.stdout?.toString() ?? "";
}

function commandExists(cmd) {
  return spawnSync("sh", ["-c", `command -v ${cmd}`], { stdio: "ignore" }).status === 0;
}

let aptUpdated = false;
/** Installs Debian packages when missing (as root, or through sudo when available). */
function aptInstall(packages) {
  const sudo = IS_ROOT ? [] : ["sudo", "-n"];
  if (!IS_ROOT && !commandExists("sudo")) {
    throw new Error(`missing Debian packages ${packages.join(", ")}; install them as root: apt-get install -y ${packages.join(" ")}`);
  }
  const exec = (args) => run(sudo[0] ?? args[0], sudo.length ? [...sudo.slice(1), ...args] : args.slice(1));
  if (!aptUpdated) {
    log("apt-get update");
    exec(["apt-get", "update"]);
    aptUpdated = true;
  }
  log(`apt-get install -y ${packages.join(" ")}`);
  exec(["apt-get", "install", "-y", "--no-install-recommends", ...packages]);
}

/** The newest PostgreSQL server binaries Debian installed, or null. */
export function findPgBin() {
  const base = "/usr/lib/postgresql";
  if (!existsSync(base)) return null;
  const versions = readdirSync(base)
    .filter((v) => existsSync(join(base, v, "bin", "initdb")))
    .sort((a, b) => Number(b) - Number(a));
  return versions.length ? join(base, versions[0], "bin") : null;
}

export function ensurePostgresInstalled() {
  if (findPgBin()) return;
  aptInstall(["postgresql"]);
  if (!findPgBin()) throw new Error("postgresql was installed but no initdb was found under /usr/lib/postgresql");
}

/** Installs the Debian packages among `packages` that dpkg does not list as installed. */
export function ensureDebianPackages(packages) {
  const missing = packages.filter((p) => spawnSync("dpkg", ["-s", p], { stdio: "ignore" }).status !== 0);
  if (missing.length) aptInstall(missing);
}

export function ensureChromium() {
  const path = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
  if (existsSync(path)) return path;
  aptInstall(["chromium"]);
  if (!existsSync(path)) throw new Error(`chromium was installed but ${path} is missing`);
  return path;
}

function hashFiles(paths) {
  const h = createHash("sha256");
  for (const p of paths) if (existsSync(join(ROOT, p))) h.update(p).update(readFileSync(join(ROOT, p)));
  return h.digest("hex");
}

/** Installs npm dependencies when node_modules is missing or older than package-lock.json. */
export function ensureNodeModules() {
  const stamp = join(ROOT, "node_modules", ".burstwise-lock-hash");
  const want = hashFiles(["package-lock.json"]);
  if (existsSync(stamp) && readFileSync(stamp, "utf8") === want) return;
  log("installing npm dependencies (npm ci)");
  run("npm", ["ci", "--no-audit", "--no-fund"]);
  writeFileSync(stamp, want);
}

/** Runs `fn` as the postgres OS user when we are root (initdb refuses to run as root). */
function asPg(bin, args, opts = {}) {
  if (IS_ROOT) return run("runuser", ["-u", "postgres", "--", bin, ...args], opts);
  return run(bin, args, opts);
}

/** Every parent of `dir` must be enterable by the postgres user; add o+x where it is not. */
function ensureTraversable(dir) {
  if (!IS_ROOT) return;
  let d = dir;
  while (d !== "/") {
    const mode = statSync(d).mode;
    if ((mode & 0o001) === 0) {
      log(`chmod o+x ${d} (so the postgres user can reach the project's cluster)`);
      chmodSync(d, mode | 0o001);
    }
    d = dirname(d);
  }
}

export function pgIsRunning() {
  const bin = findPgBin();
  if (!bin || !existsSync(join(PG_DATA, "PG_VERSION"))) return false;
  const r = IS_ROOT
    ? spawnSync("runuser", ["-u", "postgres", "--", join(bin, "pg_ctl"), "-D", PG_DATA, "status"], { stdio: "ignore" })
    : spawnSync(join(bin, "pg_ctl"), ["-D", PG_DATA, "status"], { stdio: "ignore" });
  return r.status === 0;
}

// Processes using the local cluster register here, so the last one out stops it. Each file is
// named by the pid and holds that process's start time, because a pid alone is reused: a file
// left by a killed process must not keep the cluster running for whatever process gets its pid.
const PG_CLIENTS = join(PG_DIR, "clients");
/** A process's start time in clock ticks since boot (/proc/<pid>/stat field 22), or null when it is gone. */
function startTimeOf(pid) {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, "utf8");
    return stat.slice(stat.lastIndexOf(")") + 2).split(" ")[19] ?? null;
  } catch {
    return null;
  }
}
function registerPgClient() {
  mkdirSync(PG_CLIENTS, { recursive: true });
  // Written aside and renamed into place, so another process never reads a half-written file.
  const file = join(PG_CLIENTS, String(process.pid));
  writeFileSync(`${file}.tmp`, startTimeOf(process.pid) ?? "");
  renameSync(`${file}.tmp`, file);
}
/** Other processes still using the cluster; files of processes that are gone are removed. */
function otherPgClients() {
  if (!existsSync(PG_CLIENTS)) return [];
  return readdirSync(PG_CLIENTS).filter((f) => /^\d+$/.test(f)).map(Number).filter((pid) => {
    if (pid === process.pid) return false;
    const file = join(PG_CLIENTS, String(pid));
    let recorded = "";
    try { recorded = readFileSync(file, "utf8").trim(); } catch { return false; }
    const live = recorded !== "" && startTimeOf(pid) === recorded;
    if (!live) rmSync(file, { force: true });
    return live;
  });
}

/**
 * Creates (once) and starts the project-local cluster under .local/pg, listening on
 * 127.0.0.1 only. Returns true when this call started it (so the caller stops it).
 */
export function ensureLocalCluster() {
  registerPgClient();
  ensurePostgresInstalled();
  const bin = findPgBin();
  mkdirSync(PG_DIR, { recursive: true });
  ensureTraversable(PG_DIR);
  if (!existsSync(join(PG_DATA, "PG_VERSION"))) {
    log(`creating the local PostgreSQL cluster in ${PG_DATA}`);
    mkdirSync(PG_DATA, { recursive: true });
    mkdirSync(PG_SOCK, { recursive: true });
    if (IS_ROOT) run("chown", ["-R", "postgres:postgres", PG_DIR]);
    chmodSync(PG_DATA, 0o700);
    asPg(join(bin, "initdb"), ["-D", PG_DATA, "-U", "postgres", "--auth=trust", "-E", "UTF8", "--no-locale"], { quiet: true });
  }
  if (pgIsRunning()) return false;
  log(`starting PostgreSQL on 127.0.0.1:${PG_PORT}`);
  asPg(join(bin, "pg_ctl"), [
    "-D", PG_DATA, "-l", join(PG_DIR, "postgres.log"), "-w", "-t", "60",
    "-o", `-p ${PG_PORT} -k ${PG_SOCK} -c listen_addresses=127.0.0.1`, "start",
  ], { quiet: true });
  return true;
}

export function stopLocalCluster() {
  try { rmSync(join(PG_CLIENTS, String(process.pid)), { force: true }); } catch { /* gone */ }
  const others = otherPgClients();
  if (others.length) {
    log(`PostgreSQL left running for ${others.length} other process(es) using it`);
    return;
  }
  const bin = findPgBin();
  if (!bin || !pgIsRunning()) return;
  log("stopping PostgreSQL");
  try {
    asPg(join(bin, "pg_ctl"), ["-D", PG_DATA, "-m", "fast", "-w", "stop"], { quiet: true });
  } catch (e) {
    log(`could not stop PostgreSQL: ${e.message}`);
  }
}

export const localUrl = (db) => `postgres://postgres@127.0.0.1:${PG_PORT}/${db}`;

/** Runs one SQL statement against the local cluster's maintenance database. */
export function psql(sql, db = "postgres") {
  const bin = findPgBin();
  return run(join(bin, "psql"), ["-h", "127.0.0.1", "-p", String(PG_PORT), "-U", "postgres", "-d", db, "-tAc", sql], { quiet: true }).trim();
}

export function ensureDatabase(name) {
  if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`invalid database name ${name}`);
  if (psql(`select 1 from pg_database where datname = '${name}'`) !== "1") {
    log(`creating database ${name}`);
    psql(`create database ${name}`);
  }
}

export function dropDatabase(name) {
  psql(`drop database if exists ${name} with (force)`);
}

/** A secret generated once per clone and kept in .local (git-ignored). */
export function localSecret() {
  mkdirSync(LOCAL, { recursive: true });
  const file = join(LOCAL, "nextauth-secret");
  if (!existsSync(file)) writeFileSync(file, randomBytes(32).toString("hex"), { mode: 0o600 });
  return readFileSync(file, "utf8").trim();
}

export function migrate(databaseUrl) {
  log("running migrations");
  run("npx", ["knex", "migrate:latest"], { env: { DATABASE_URL: databaseUrl, NODE_OPTIONS: "--import tsx" }, quiet: true });
}

export function seedDemo(databaseUrl) {
  // seeds/ refuses by itself to write over a database that already holds users.
  run("npx", ["knex", "seed:run"], { env: { DATABASE_URL: databaseUrl, NODE_OPTIONS: "--import tsx" } });
}

const BUILD_INPUTS = ["app", "lib", "ssa", "db", "public", "types", "examples"];
const BUILD_FILES = ["package-lock.json", "next.config.mjs", "tailwind.config.ts", "postcss.config.mjs", "tsconfig.json", "proxy.ts"];

function listFiles(dir, out) {
  if (!existsSync(dir)) return out;
  for (const name of readdirSync(dir).sort()) {
    const p = join(dir, name);
    if (statSync(p).isDirectory()) listFiles(p, out);
    else out.push(p.slice(ROOT.length + 1));
  }
  return out;
}

/** Builds the Next.js app unless the last build was made from exactly these sources. */
export function ensureBuild() {
  const files = [...BUILD_FILES];
  for (const d of BUILD_INPUTS) listFiles(join(ROOT, d), files);
  const want = hashFiles(files);
  const stamp = join(LOCAL, `build-hash${DIST_DIR === ".next" ? "" : `-${DIST_DIR.replace(/[^A-Za-z0-9_-]/g, "_")}`}`);
  if (existsSync(join(ROOT, DIST_DIR, "BUILD_ID")) && existsSync(stamp) && readFileSync(stamp, "utf8") === want) {
    log("app build is up to date");
    return;
  }
  log("building the app (next build)");
  run("npx", ["next", "build"]);
  mkdirSync(LOCAL, { recursive: true });
  writeFileSync(stamp, want);
}

/** Spawns a long-running child with prefixed output; returns the ChildProcess. */
export function startChild(name, cmd, args, env) {
  const child = spawn(cmd, args, { cwd: ROOT, env: { ...quietEnv, ...env }, stdio: ["ignore", "pipe", "pipe"], detached: true });
  const prefix = (stream, out) => {
    let buf = "";
    stream.on("data", (d) => {
      buf += d.toString();
      let i;
      while ((i = buf.indexOf("\n")) >= 0) {
        out.write(`[${name}] ${buf.slice(0, i)}\n`);
        buf = buf.slice(i + 1);
      }
    });
  };
  prefix(child.stdout, process.stdout);
  prefix(child.stderr, process.stderr);
  return child;
}

/** Stops a detached child and its process group, SIGTERM then SIGKILL after `graceMs`. */
export function stopChild(child, graceMs = 10_000) {
  return new Promise((resolveStop) => {
    if (!child || child.exitCode !== null || child.signalCode !== null) return resolveStop();
    const timer = setTimeout(() => {
      try { process.kill(-child.pid, "SIGKILL"); } catch { /* already gone */ }
    }, graceMs);
    child.once("exit", () => { clearTimeout(timer); resolveStop(); });
    try { process.kill(-child.pid, "SIGTERM"); } catch { clearTimeout(timer); resolveStop(); }
  });
}

export function currentUser() {
  return userInfo().username;
}

/** A TCP port on 127.0.0.1 that nothing listens on right now. */
export function freePort() {
  return new Promise((resolvePort, reject) => {
    const srv = createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address();
      srv.close(() => resolvePort(port));
    });
  });
}

/**
 * Starts the local mail fake (scripts/mail-fake.ts) on 127.0.0.1:`port`, storing messages in
 * `databaseUrl`, and waits until it accepts connections. Returns the child and the env the
 * app and worker need to send through it.
 */
export async function startMailFake(databaseUrl, port) {
  const child = startChild("mail", process.execPath, ["--import", "tsx", "scripts/mail-fake.ts", "--port", String(port)], { DATABASE_URL: databaseUrl });
  const until = Date.now() + 30_000;
  while (Date.now() < until) {
    if (child.exitCode !== null) throw new Error(`the mail fake exited (${child.exitCode}); is port ${port} taken? Set MAIL_FAKE_PORT`);
    const ok = await new Promise((r) => {
      const s = connect(port, "127.0.0.1", () => { s.end(); r(true); });
      s.once("error", () => r(false));
    });
    if (ok) return { child, env: { SMTP_URL: `smtp://127.0.0.1:${port}`, MAIL_FAKE: "1" } };
    await new Promise((r) => setTimeout(r, 200));
  }
  await stopChild(child);
  throw new Error(`the mail fake did not listen on 127.0.0.1:${port} within 30 s`);
}
