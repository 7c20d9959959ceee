/**
 * Loads an engine module on first use, in either way a module of ours can be running: on a main
 * thread (and under the test runner) modules are ES modules and `import()` works; on a pool
 * thread under Node 20, tsx compiles them to CommonJS, `import()` of a TypeScript file finds
 * nothing (ERR_MODULE_NOT_FOUND) and `require` works. Each call site passes both, so the relative
 * path is resolved from its own file. Node only.
 */
export async function loadModule<T>(viaImport: () => Promise<T>, viaRequire: () => T): Promise<T> {
  try {
    return await viaImport();
  } catch (e) {
    if ((e as { code?: string }).code !== "ERR_MODULE_NOT_FOUND" || typeof require !== "function") throw e;
    return viaRequire();
  }
}
