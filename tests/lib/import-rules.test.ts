// The layout and import rules of DEVELOPERS.md ("Layout and import rules"), checked on every
// `npm test`. Each module of the product is parsed with the TypeScript compiler API (no new
// dependency), its imports resolved to files or packages, and each rule checked either on a
// module's own imports or, where a rule is about what a module *loads* (a client component, the
// worker, the CLI), on everything it reaches through value imports. A failure names the file,
// the import and the rule.
import { existsSync, readdirSync, readFileSync, statSync } from "node:fs";
import { builtinModules } from "node:module";
import { dirname, join, relative, resolve } from "node:path";

import ts from "typescript";
import { describe, expect, it } from "vitest";

const ROOT = resolve(__dirname, "../..");
/** The folders and top-level files whose modules the rules govern (scripts/ is bootstrap in plain Node). */
const PRODUCT = ["app", "lib", "worker", "cli", "ssa", "db", "migrations", "seeds", "knexfile.ts", "proxy.ts"];
/** Browser-safe code a client component may load, besides app/ itself (DEVELOPERS.md); examples/ are JSON data. */
const BROWSER_SAFE = [
  "lib/schemas/", "ssa/", "lib/view/",
  "examples/",
];
/** The pure registry packages ssa/ may use (DEVELOPERS.md). */
const SSA_PACKAGES = new Set(["mathjs", "ml-matrix", "seedrandom", "simple-statistics", "fast-xml-parser"]);
/** Packages that only a server can load: never in what a client component reaches. */
const SERVER_PACKAGES = new Set(["knex", "pg", "pg-boss", "nodemailer", "piscina", "bcryptjs", "smtp-server", "server-only"]);
/** Packages that write SQL: only lib/data, db/, migrations/ and knexfile.ts name them (pg-boss is the queue, lib/jobs.ts). */
const DB_PACKAGES = new Set(["knex", "pg"]);

/**
 * Known violations whose fix belongs to another engineer's branch, as "file -> target" (the
 * target a file or package). The lead empties this list after merging that branch.
 */
/** Known violations, each with the rule it breaks; empty, and kept so that one can be listed with its reason. */
const ALLOWED: Record<string, string> = {};

interface Edge { spec: string; target: string; typeOnly: boolean; line: number }
interface Module {
  file: string; edges: Edge[]; useClient: boolean;
  /** Uses of globals a rule restricts, e.g. "process.env" or "Math.random", with their line. */
  globals: { name: string; line: number }[];
}

/** Lists the .ts/.tsx/.mjs files under `path` (a folder or a file), relative to ROOT. */
function listSources(path: string): string[] {
  const abs = join(ROOT, path);
  if (!existsSync(abs)) return [];
  if (statSync(abs).isFile()) return [path];
  return readdirSync(abs).flatMap((name) => {
    if (name === "node_modules" || name.startsWith(".")) return [];
    const child = join(path, name);
    if (statSync(join(ROOT, child)).isDirectory()) return listSources(child);
    return /\.(tsx?|mjs)$/.test(name) && !name.endsWith(".d.ts") ? [child] : [];
  });
}

/** Maps an import specifier to a file relative to ROOT, `pkg:<name>`, or `node:<name>`. */
function resolveSpec(from: string, spec: string): string {
  if (spec.startsWith("node:") || builtinModules.includes(spec)) return `node:${spec.replace(/^node:/, "")}`;
  let base: string;
  if (spec.startsWith("@/")) base = join(ROOT, spec.slice(2));
  else if (spec.startsWith(".")) base = resolve(ROOT, dirname(from), spec);
  else {
    const parts = spec.split("/");
    return `pkg:${spec.startsWith("@") ? parts.slice(0, 2).join("/") : parts[0]}${spec.startsWith("@") ? "" : parts.length > 1 ? `/${parts.slice(1).join("/")}` : ""}`;
  }
  const noJs = base.replace(/\.(m?js)$/, "");
  for (const candidate of [base, `${noJs}.ts`, `${noJs}.tsx`, `${noJs}.mjs`, join(base, "index.ts"), join(base, "index.tsx")]) {
    if (existsSync(candidate) && statSync(candidate).isFile()) return relative(ROOT, candidate);
  }
  return relative(ROOT, base); // unresolved: kept as a path, so path rules still apply
}

/** Whether an import or export declaration brings in only types (erased at build). */
function isTypeOnly(node: ts.ImportDeclaration | ts.ExportDeclaration): boolean {
  if (ts.isExportDeclaration(node)) {
    return node.isTypeOnly || (!!node.exportClause && ts.isNamedExports(node.exportClause) && node.exportClause.elements.length > 0 && node.exportClause.elements.every((e) => e.isTypeOnly));
  }
  const clause = node.importClause;
  if (!clause) return false; // a side-effect import always loads
  if (clause.isTypeOnly) return true;
  if (clause.name) return false;
  const bindings = clause.namedBindings;
  return !!bindings && ts.isNamedImports(bindings) && bindings.elements.length > 0 && bindings.elements.every((e) => e.isTypeOnly);
}

/** Parses one file: its imports (static, re-exports, dynamic, require), its directive and its restricted globals. */
function parseModule(file: string): Module {
  const text = readFileSync(join(ROOT, file), "utf8");
  const source = ts.createSourceFile(file, text, ts.ScriptTarget.Latest, true, file.endsWith(".tsx") ? ts.ScriptKind.TSX : ts.ScriptKind.TS);
  const lineOf = (n: ts.Node) => source.getLineAndCharacterOfPosition(n.getStart(source)).line + 1;
  const edges: Edge[] = [];
  const globals: Module["globals"] = [];
  const add = (spec: string, typeOnly: boolean, node: ts.Node) => edges.push({ spec, target: resolveSpec(file, spec), typeOnly, line: lineOf(node) });
  const first = source.statements[0];
  const useClient = !!first && ts.isExpressionStatement(first) && ts.isStringLiteral(first.expression) && first.expression.text === "use client";
  const visit = (node: ts.Node) => {
    if ((ts.isImportDeclaration(node) || ts.isExportDeclaration(node)) && node.moduleSpecifier && ts.isStringLiteral(node.moduleSpecifier)) {
      add(node.moduleSpecifier.text, isTypeOnly(node), node);
    } else if (ts.isImportEqualsDeclaration(node) && ts.isExternalModuleReference(node.moduleReference) && ts.isStringLiteral(node.moduleReference.expression)) {
      add(node.moduleReference.expression.text, node.isTypeOnly, node);
    } else if (ts.isCallExpression(node) && node.arguments.length > 0 && ts.isStringLiteralLike(node.arguments[0]!)) {
      const callee = node.expression;
      if (callee.kind === ts.SyntaxKind.ImportKeyword || (ts.isIdentifier(callee) && callee.text === "require")) {
        add((node.arguments[0] as ts.StringLiteralLike).text, false, node);
      }
    } else if (ts.isImportTypeNode(node) && ts.isLiteralTypeNode(node.argument) && ts.isStringLiteral(node.argument.literal)) {
      add(node.argument.literal.text, true, node);
    } else if (ts.isPropertyAccessExpression(node) && ts.isIdentifier(node.expression)) {
      const name = `${node.expression.text}.${node.name.text}`;
      if (name === "process.env" || name === "Math.random" || name === "Date.now") globals.push({ name, line: lineOf(node) });
      if (node.expression.text === "console") globals.push({ name: "console", line: lineOf(node) });
    }
    ts.forEachChild(node, visit);
  };
  visit(source);
  return { file, edges, useClient, globals };
}

const files = PRODUCT.flatMap(listSources);
const testFiles = listSources("tests");
const modules = new Map<string, Module>([...files, ...testFiles].map((f) => [f, parseModule(f)]));

const under = (file: string, ...prefixes: string[]) => prefixes.some((p) => file === p || file.startsWith(p.endsWith("/") || p.includes(".") ? p : `${p}/`));
const isPackage = (target: string, names: Set<string> | string[]) => {
  if (!target.startsWith("pkg:")) return false;
  const name = target.slice(4).split("/")[0]!.startsWith("@") ? target.slice(4).split("/").slice(0, 2).join("/") : target.slice(4).split("/")[0]!;
  return [...names].includes(name);
};

/** Every module reachable from `start` through value imports, with the chain that reaches it. */
function reachable(start: string): Map<string, string[]> {
  const seen = new Map<string, string[]>([[start, [start]]]);
  const queue = [start];
  while (queue.length) {
    const file = queue.shift()!;
    for (const e of modules.get(file)?.edges ?? []) {
      if (e.typeOnly || seen.has(e.target)) continue;
      seen.set(e.target, [...seen.get(file)!, e.target]);
      if (modules.has(e.target)) queue.push(e.target);
    }
  }
  return seen;
}

interface Violation { file: string; line: number; spec: string; rule: string; via?: string[] }
const format = (v: Violation) => `${v.file}:${v.line} imports "${v.spec}"${v.via && v.via.length > 2 ? ` (reaching ${v.via.slice(1).join(" -> ")})` : ""}: breaks "${v.rule}"`;

/** Drops the allow-listed violations; returns what is left, formatted. */
function report(violations: Violation[]): string[] {
  return violations
    .filter((v) => ALLOWED[`${v.file} -> ${v.via?.at(-1) ?? resolveSpec(v.file, v.spec)}`] !== v.rule)
    .map(format);
}

/** Direct imports of files matching `from` whose target matches `bad`. */
function directViolations(from: (f: string) => boolean, bad: (e: Edge, file: string) => boolean, rule: string, includeTypes = true): Violation[] {
  return [...modules.values()].filter((m) => from(m.file)).flatMap((m) =>
    m.edges.filter((e) => (includeTypes || !e.typeOnly) && bad(e, m.file)).map((e) => ({ file: m.file, line: e.line, spec: e.spec, rule })));
}

/** Value imports of files matching `from` through which a module matching `bad` is loaded. */
function loadViolations(from: (f: string) => boolean, bad: (target: string) => boolean, rule: string): Violation[] {
  const out: Violation[] = [];
  for (const m of modules.values()) {
    if (!from(m.file)) continue;
    const reached = reachable(m.file);
    for (const [target, chain] of reached) {
      if (!bad(target)) continue;
      // Name the first import of this file on the chain, then the whole chain.
      const firstHop = m.edges.find((e) => e.target === chain[1]);
      out.push({ file: m.file, line: firstHop?.line ?? 0, spec: firstHop?.spec ?? target, rule, via: chain });
    }
  }
  return out;
}

describe("import rules (DEVELOPERS.md, Layout and import rules)", () => {
  it("finds the product's modules and their imports (the checker sees what it checks)", () => {
    expect(modules.get("app/api/health/route.ts")?.edges.length).toBeGreaterThan(0);
    expect(files.filter((f) => modules.get(f)!.useClient).length).toBeGreaterThan(10);
    expect(files.some((f) => f.startsWith("ssa/node/"))).toBe(true);
  });

  it("app/ never imports db/ or worker/", () => {
    expect(report(directViolations((f) => under(f, "app", "proxy.ts"), (e) => under(e.target, "db", "worker"), "app/ never imports db/ or worker/"))).toEqual([]);
  });

  it("client components load only lib/schemas, lib/view and ssa/ (not ssa/node/), never server code, also through a helper", () => {
    const rule = "client components load only app/, lib/schemas, lib/view and ssa/ (not ssa/node/)";
    const bad = (t: string) =>
      t.startsWith("node:") || isPackage(t, SERVER_PACKAGES) ||
      (!t.startsWith("pkg:") && !under(t, "app") && (!under(t, ...BROWSER_SAFE) || under(t, "ssa/node")));
    expect(report(loadViolations((f) => modules.get(f)!.useClient && !f.startsWith("tests/"), bad, rule))).toEqual([]);
  });

  it("lib/view/ (the browser side of lib) loads only lib/view/, lib/schemas/, ssa/ (not ssa/node/) and browser-safe packages", () => {
    const rule = "lib/view/ loads only lib/view/, lib/schemas/, ssa/ (not ssa/node/) and browser-safe packages";
    const bad = (t: string) =>
      t.startsWith("node:") || isPackage(t, SERVER_PACKAGES) ||
      (!t.startsWith("pkg:") && (!under(t, ...BROWSER_SAFE) || under(t, "ssa/node")));
    expect(report(loadViolations((f) => under(f, "lib/view"), bad, rule))).toEqual([]);
  });

  it("worker/ and cli/ never load app/ or next/*", () => {
    const rule = "worker/ and cli/ never import app/ or next/*";
    expect(report(loadViolations((f) => under(f, "worker", "cli"), (t) => under(t, "app") || isPackage(t, ["next"]), rule))).toEqual([]);
  });

  it("only lib/data imports db/ (seeds, migrations and scripts go through lib/data)", () => {
    const rule = "only lib/data imports db/";
    const scripts = listSources("scripts").filter((f) => f.endsWith(".ts"));
    for (const f of scripts) if (!modules.has(f)) modules.set(f, parseModule(f));
    const importers = (f: string) => (files.includes(f) || scripts.includes(f)) && !under(f, "lib/data", "db");
    expect(report(directViolations(importers, (e) => under(e.target, "db"), rule))).toEqual([]);
  });

  it("only lib/data, db/, migrations/ and knexfile.ts name knex or pg (all SQL lives in lib/data; seeds too)", () => {
    const rule = "all SQL lives in lib/data (knex and pg are named only there, in db/, migrations/ and knexfile.ts)";
    const importers = (f: string) => files.includes(f) && !under(f, "lib/data", "db", "migrations", "knexfile.ts");
    expect(report(directViolations(importers, (e) => isPackage(e.target, DB_PACKAGES), rule))).toEqual([]);
  });

  it("ssa/ imports only ssa/ and the pure registry packages; node:* only in ssa/node/", () => {
    const rule = "ssa/ imports only ssa/ and pure registry packages (mathjs, ml-matrix, seedrandom, simple-statistics, fast-xml-parser); node:* only in ssa/node/";
    const bad = (e: Edge, file: string) => {
      if (e.target.startsWith("node:")) return !under(file, "ssa/node");
      if (e.target.startsWith("pkg:")) return !isPackage(e.target, SSA_PACKAGES) && !(under(file, "ssa/node") && isPackage(e.target, ["piscina"]));
      return !under(e.target, "ssa");
    };
    expect(report(directViolations((f) => under(f, "ssa"), bad, rule))).toEqual([]);
  });

  it("only lib/env.ts reads process.env", () => {
    const found = files.filter((f) => f !== "lib/env.ts").flatMap((f) =>
      modules.get(f)!.globals.filter((g) => g.name === "process.env").map((g) => `${f}:${g.line} reads process.env: breaks "only lib/env.ts reads process.env"`));
    expect(found).toEqual([]);
  });

  it("ssa/ (outside ssa/node/) uses no Math.random, Date.now or console", () => {
    const found = files.filter((f) => under(f, "ssa") && !under(f, "ssa/node")).flatMap((f) =>
      modules.get(f)!.globals.filter((g) => g.name !== "process.env").map((g) => `${f}:${g.line} uses ${g.name}: breaks "no Math.random, Date.now or console in ssa/"`));
    expect(found).toEqual([]);
  });

  it('"server-only" never appears in modules the worker, the CLI or the tests load', () => {
    const rule = '"server-only" never in modules the worker, CLI or tests load';
    expect(report(loadViolations((f) => under(f, "worker", "cli", "tests"), (t) => t === "pkg:server-only", rule))).toEqual([]);
  });
});
