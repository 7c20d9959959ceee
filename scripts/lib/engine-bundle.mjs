// The command line and the engine's pool threads as plain ES modules (esbuild, in the git-ignored
// .cache/engine-<id>/), so `npm run cli` starts in about a tenth of a second instead of loading the
// TypeScript loader in every process and every thread. Rebuilt when any file it was built from
// changed (mtime or size); npm packages stay external and load from node_modules. Several
// processes may build at once: each writes its own directory and then swaps the pointer file
// .cache/engine.json with a rename, so no process ever loads a half-written bundle.
import { existsSync, mkdirSync, readFileSync, readdirSync, renameSync, rmSync, statSync, writeFileSync } from "node:fs";
import { join, relative, resolve, dirname } from "node:path";
import { fileURLToPath } from "node:url";

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), "..", "..");
const CACHE = join(ROOT, ".cache");
const POINTER = join(CACHE, "engine.json");
/** The bundle's entry points: its own name → source. */
const ENTRIES = { cli: "cli/index.ts", "engine-task": "ssa/node/engine-task.ts" };
/** Old bundle directories are removed once they are this old (a process may still be running from one). */
const KEEP_OLD_MS = 10 * 60_000;

function stamp(file) {
  try {
    const s = statSync(join(ROOT, file));
    return `${s.mtimeMs}:${s.size}`;
  } catch {
    return "missing";
  }
}

function current() {
  let pointer;
  try {
    pointer = JSON.parse(readFileSync(POINTER, "utf8"));
  } catch {
    return null;
  }
  const dir = join(CACHE, pointer.dir ?? "");
  if (!pointer.dir || !existsSync(join(dir, "cli.mjs"))) return null;
  for (const [file, was] of Object.entries(pointer.inputs ?? {})) if (stamp(file) !== was) return null;
  return dir;
}

/**
 * ssa/node/load-module.ts loads a module with `import()`, falling back to `require` only on a
 * thread where tsx compiled our files to CommonJS. In the bundle `import()` always works, so the
 * `require` fallbacks are left out: bundled, they would turn every lazily loaded module (the
 * formula parser, the ODE code) into one loaded at start.
 */
const requireFallbacksStayOut = {
  name: "require-fallbacks-stay-out",
  setup(b) {
    b.onResolve({ filter: /^\./, namespace: "file" }, (args) => (args.kind === "require-call" ? { path: args.path, external: true } : undefined));
  },
};

async function build() {
  const { build: esbuild } = await import("esbuild");
  mkdirSync(CACHE, { recursive: true });
  const id = `engine-${Date.now().toString(36)}-${process.pid}`;
  const dir = join(CACHE, id);
  const result = await esbuild({
    absWorkingDir: ROOT,
    entryPoints: ENTRIES,
    outdir: dir,
    outExtension: { ".js": ".mjs" },
    bundle: true,
    splitting: true,
    format: "esm",
    platform: "node",
    target: "node20",
    packages: "external",
    tsconfig: join(ROOT, "cli/tsconfig.json"),
    chunkNames: "chunk-[hash]",
    metafile: true,
    logLevel: "silent",
    plugins: [requireFallbacksStayOut],
  });
  const inputs = {};
  for (const file of Object.keys(result.metafile.inputs)) if (!file.includes("node_modules")) inputs[file] = stamp(file);
  // The pointer's own inputs include this file, so a change to how the bundle is built rebuilds it.
  inputs[relative(ROOT, fileURLToPath(import.meta.url))] = stamp(relative(ROOT, fileURLToPath(import.meta.url)));
  const tmp = `${POINTER}.${process.pid}`;
  writeFileSync(tmp, JSON.stringify({ dir: id, inputs }));
  renameSync(tmp, POINTER);
  for (const old of readdirSync(CACHE)) {
    if (!old.startsWith("engine-") || old === id) continue;
    try {
      if (Date.now() - statSync(join(CACHE, old)).mtimeMs > KEEP_OLD_MS) rmSync(join(CACHE, old), { recursive: true, force: true });
    } catch {
      // another process removed it first
    }
  }
  return dir;
}

/** The directory of an up-to-date bundle (cli.mjs, engine-task.mjs), building it first when needed. */
export async function engineBundle() {
  return current() ?? (await build());
}
