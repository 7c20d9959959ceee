/**
 * The direct method's kernel compiled per circuit to WebAssembly: the same algorithm as the
 * generated JS kernel (ssa/kernel.ts directKernelSource), emitted as one wasm function with
 * ssa/wasm-encoder.ts, so that its samples and event counts are bit-identical to it for every seed:
 * - the same xoshiro128+ words (ssa/rng.ts), two per event, τ first, then the reaction;
 * - the same −ln u (ssa/rng.ts exponentialOfWord): the same powers of two and ln(1 + k/256)
 *   tables, copied into linear memory, the same Taylor polynomial in the same order, Math.log
 *   imported for the few words the table does not cover;
 * - counts held as int32 and kept in [0, 2^30] (else the JS kernel replays the cell), converted
 *   exactly to f64 where a propensity reads them; propensities computed by the same f64 operations in
 *   the same order (mass action: (c/Πν!)·x·(x−1)…, left to right; Hill: the same per-count table
 *   from hillTable, the formula, imported, beyond it), the sum a₀ + a₁ + … left to right, the
 *   same cascade r −= a_j for the reaction;
 * - grid samples stored straight into linear memory with the caller's stride: `block` hands out a
 *   Float64Array view over that memory, so an ensemble's sample block costs no copy; any other
 *   output array gets the cell's samples copied after the call.
 * Circuits with formula rates keep the JS kernel (canCompileWasmKernel). Pure: no I/O; the global
 * WebAssembly (Node, browsers) is the only host object used.
 */
import { MAX_KERNEL_COUNT, canGenerateKernel, compileDirectKernel, hillPropensity, hillTable, type DirectKernel } from "./kernel";
import { LawCode, type Model } from "./model-core";
import { LOG1P_TABLE, POW2_TABLE, TWO_POW_M32 } from "./rng";
import { Code, F64, I32, Op, encodeModule, type ValType } from "./wasm-encoder";

/** A wasm kernel: the DirectKernel contract, plus `block`, a view over its memory for samples. */
export interface WasmKernel extends DirectKernel {
  /**
   * A Float64Array of `values` elements inside the kernel's memory, with room for a grid of
   * `gridLength` times reserved first, so that kernel calls on that grid write samples into it
   * without a copy. Valid until the next call of `block` (memory may grow then); null when the
   * memory cannot grow that far.
   */
  block(values: number, gridLength: number): Float64Array | null;
}

const LN2 = 0.6931471805599453;

/** Samples a call into a caller's own array may stage in wasm memory (8 MB); beyond, the JS kernel runs. */
const MAX_COPY_VALUES = 1 << 20;

/** Return value of the wasm function when a count left [0, 2^30]: the cell is replayed by the JS kernel. */
const OUT_OF_RANGE = -2;

/** The part of the host's WebAssembly API used here (ssa/ compiles without DOM or Node types). */
interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
interface WasmApi {
  Module: new (bytes: Uint8Array<ArrayBuffer>) => object;
  Instance: new (module: object, imports: Record<string, Record<string, unknown>>) => { exports: Record<string, unknown> };
}
const wasmApi = (): WasmApi | undefined => (globalThis as { WebAssembly?: WasmApi }).WebAssembly;

// Counts are int32 locals (as in the JS kernel, whose counts V8 keeps as small integers); a change
// that takes a count out of [0, 2^30] returns OUT_OF_RANGE and the JS kernel, whose numbers do not
// wrap, replays the cell from its start, so no wrapped count ever reaches a sample.
// Layout of linear memory (bytes): powers of two, ln(1 + k/256) at 2048 so that LT[eh − 256] is at
// eh·8, then the state (counts, generator, grid index reached), then the Hill tables; grid and
// sample regions are allocated above, on demand.
const P2_BASE = 0;
const LT_BASE = 2048;
const STATE_BASE = 4096;

/** Why a model cannot use the wasm kernel, or null when it can. */
export function wasmKernelRefusal(m: Model): string | null {
  if (!wasmApi()) return "WebAssembly is not available";
  if (!canGenerateKernel(m)) return "the circuit is too large, or its counts too near the int32 limit, for a compiled kernel";
  for (let p = 0; p < m.changeDelta.length; p++) {
    if (Math.abs(m.changeDelta[p]) >= MAX_KERNEL_COUNT) return "a stoichiometry is too large for int32 counts";
  }
  for (let j = 0; j < m.nReactions; j++) {
    if (m.law[j] !== LawCode.MassAction && m.law[j] !== LawCode.HillActivation && m.law[j] !== LawCode.HillRepression) {
      return `reaction ${j} has a formula rate, which the wasm kernel does not express`;
    }
  }
  return null;
}

/** Whether the wasm kernel can run this model (else ssa/ensemble.ts kernelFor keeps the JS kernel). */
export function canCompileWasmKernel(m: Model): boolean {
  return wasmKernelRefusal(m) === null;
}

function factorial(n: number): number {
  let f = 1;
  for (let i = 2; i <= n; i++) f *= i;
  return f;
}

const align8 = (n: number) => Math.ceil(n / 8) * 8;

interface Layout {
  x: number;
  rs: number;
  gOut: number;
  tables: number[];
  tableLength: number[];
  dataEnd: number;
}

/** Emitted module and the memory layout it assumes (exported for tests). */
export function wasmKernelModule(m: Model, tables: (Float64Array | null)[]): { bytes: Uint8Array<ArrayBuffer>; layout: Layout; hillImports: number[] } {
  const nS = m.nSpecies;
  const nR = m.nReactions;
  const xBase = STATE_BASE;
  const rsBase = xBase + 8 * nS;
  const gOut = rsBase + 16;
  let top = align8(gOut + 4);
  const tableAt: number[] = [];
  const tableLength: number[] = [];
  for (let j = 0; j < nR; j++) {
    const t = tables[j];
    tableAt.push(t ? top : -1);
    tableLength.push(t ? t.length : 0);
    if (t) top += 8 * t.length;
  }
  const layout: Layout = { x: xBase, rs: rsBase, gOut, tables: tableAt, tableLength, dataEnd: align8(top) };

  // Function indices: 0 = Math.log, then one Hill formula per Hill reaction.
  const LOG = 0;
  const hillImports: number[] = [];
  const hillFn: number[] = [];
  for (let j = 0; j < nR; j++) {
    if (tables[j]) {
      hillFn[j] = 1 + hillImports.length;
      hillImports.push(j);
    }
  }

  // Locals: params, then i32 scratch, then f64.
  const GRID = 0, NGRID = 1, O = 2, STRIDE = 3, MAXEV = 4;
  const locals: ValType[] = [];
  let next = 5;
  const i32Local = () => (locals.push(I32), next++);
  const f64Local = () => (locals.push(F64), next++);
  const ra = i32Local(), rb = i32Local(), rc = i32Local(), rd = i32Local(), ru = i32Local(), rt = i32Local();
  const q = i32Local(), g = i32Local(), ew = i32Local(), ee = i32Local(), eh = i32Local(), tB = i32Local();
  const s: number[] = [0];
  for (let i = 1; i < nS; i++) s.push(i32Local());
  const t = f64Local(), tg = f64Local(), events = f64Local(), asum = f64Local(), ex = f64Local(), r = f64Local(), eb = f64Local(), er = f64Local();
  const x: number[] = [];
  for (let i = 0; i < nS; i++) x.push(i32Local());
  const a: number[] = [];
  for (let j = 0; j < nR; j++) a.push(f64Local());

  const c = new Code();

  /** Pushes reaction j's propensity (ssa/kernel.ts propensitySource, operation for operation). */
  const propensity = (j: number): void => {
    if (m.law[j] === LawCode.MassAction) {
      let coef = m.c[j];
      const factors: [number, number][] = [];
      for (let p = m.reactantPtr[j]; p < m.reactantPtr[j + 1]; p++) {
        const nu = m.reactantNu[p];
        coef /= factorial(nu);
        for (let k = 0; k < nu; k++) factors.push([m.reactantIdx[p], k]);
      }
      // The JS source writes the coefficient with String(v), which round-trips exactly.
      if (coef === 0) {
        c.f64(0);
        return;
      }
      c.f64(coef);
      for (const [i, k] of factors) {
        c.get(x[i]).op(Op.f64ConvertI32S);
        if (k > 0) c.f64(k).op(Op.f64Sub);
        c.op(Op.f64Mul);
      }
      return;
    }
    const guarded = m.reactantPtr[j + 1] > m.reactantPtr[j];
    if (guarded) {
      for (let p = m.reactantPtr[j]; p < m.reactantPtr[j + 1]; p++) {
        c.get(x[m.reactantIdx[p]]).i32(m.reactantNu[p]).op(Op.i32GeS);
        if (p > m.reactantPtr[j]) c.op(Op.i32And);
      }
      c.begin(Op.if, F64);
    }
    const xi = x[m.hillInput[j]];
    c.get(xi).i32(layout.tableLength[j]).op(Op.i32LtU).begin(Op.if, F64);
    c.get(xi).i32(3).op(Op.i32Shl).mem(Op.f64Load, 3, layout.tables[j]);
    c.op(Op.else).get(xi).op(Op.f64ConvertI32S).call(hillFn[j]).op(Op.end);
    if (guarded) c.op(Op.else).f64(0).op(Op.end);
  };

  const xoshiro = (): void => {
    c.get(ra).get(rd).op(Op.i32Add).set(ru);
    c.get(rb).i32(9).op(Op.i32Shl).set(rt);
    c.get(rc).get(ra).op(Op.i32Xor).set(rc);
    c.get(rd).get(rb).op(Op.i32Xor).set(rd);
    c.get(rb).get(rc).op(Op.i32Xor).set(rb);
    c.get(ra).get(rd).op(Op.i32Xor).set(ra);
    c.get(rc).get(rt).op(Op.i32Xor).set(rc);
    c.get(rd).i32(11).op(Op.i32Rotl).set(rd);
  };

  const writeBack = (): void => {
    for (let i = 0; i < nS; i++) c.i32(0).get(x[i]).op(Op.f64ConvertI32S).mem(Op.f64Store, 3, layout.x + 8 * i);
    [ra, rb, rc, rd].forEach((v, k) => c.i32(0).get(v).mem(Op.i32Store, 2, layout.rs + 4 * k));
    c.i32(0).get(g).mem(Op.i32Store, 2, layout.gOut);
  };

  // Entry: counts and generator state from memory, initial propensities, strides.
  for (let i = 0; i < nS; i++) c.i32(0).mem(Op.f64Load, 3, layout.x + 8 * i).op(Op.i32TruncF64S).set(x[i]);
  [ra, rb, rc, rd].forEach((v, k) => c.i32(0).mem(Op.i32Load, 2, layout.rs + 4 * k).set(v));
  for (let j = 0; j < nR; j++) {
    propensity(j);
    c.set(a[j]);
  }
  for (let i = 1; i < nS; i++) c.get(STRIDE).i32(i).op(Op.i32Mul).set(s[i]);
  c.get(STRIDE).i32(nS).op(Op.i32Mul).set(tB);
  c.get(GRID).mem(Op.f64Load, 3, 0).set(tg);

  c.begin(Op.loop);
  // asum = a0 + a1 + … (left to right)
  c.get(a[0]);
  for (let j = 1; j < nR; j++) c.get(a[j]).op(Op.f64Add);
  c.set(asum);
  xoshiro();
  // ex = −ln(1 − q·2^−32) as ssa/rng.ts exponentialSource.
  c.get(ru).set(q);
  c.get(q).i32(4294967040).op(Op.i32GtU).get(q).op(Op.i32Eqz).op(Op.i32Or).begin(Op.if);
  c.f64(1).get(q).op(Op.f64ConvertI32U).f64(TWO_POW_M32).op(Op.f64Mul).op(Op.f64Sub).call(LOG).op(Op.f64Neg).set(ex);
  c.op(Op.else);
  c.i32(0).get(q).op(Op.i32Sub).set(ew);
  c.i32(31).get(ew).op(Op.i32Clz).op(Op.i32Sub).set(ee);
  c.get(ew).get(ee).i32(8).op(Op.i32Sub).op(Op.i32ShrU).set(eh);
  c.get(eh).op(Op.f64ConvertI32U).get(ee).i32(8).op(Op.i32Sub).i32(3).op(Op.i32Shl).mem(Op.f64Load, 3, P2_BASE).op(Op.f64Mul).set(eb);
  c.get(ew).op(Op.f64ConvertI32U).get(eb).op(Op.f64Sub).get(eb).op(Op.f64Div).set(er);
  c.i32(32).get(ee).op(Op.i32Sub).op(Op.f64ConvertI32S).f64(LN2).op(Op.f64Mul);
  c.get(eh).i32(3).op(Op.i32Shl).mem(Op.f64Load, 3, LT_BASE - 256 * 8).op(Op.f64Sub);
  c.get(er).f64(1).get(er).f64(0.5).get(er).f64(0.3333333333333333).get(er).f64(0.25).get(er).f64(0.2);
  c.op(Op.f64Mul, Op.f64Sub, Op.f64Mul, Op.f64Sub, Op.f64Mul, Op.f64Sub, Op.f64Mul, Op.f64Sub, Op.f64Mul);
  c.op(Op.f64Sub).set(ex);
  c.op(Op.end);
  // t = asum > 0 ? t + ex / asum : ∞
  c.get(asum).f64(0).op(Op.f64Gt).begin(Op.if, F64);
  c.get(t).get(ex).get(asum).op(Op.f64Div).op(Op.f64Add);
  c.op(Op.else).f64(Infinity).op(Op.end).set(t);
  // while (tg < t): sample, next grid point
  c.begin(Op.block).begin(Op.loop);
  c.get(tg).get(t).op(Op.f64Lt).op(Op.i32Eqz).br(Op.brIf, 1);
  for (let i = 0; i < nS; i++) {
    c.get(O);
    if (i > 0) c.get(s[i]).op(Op.i32Add);
    c.get(x[i]).op(Op.f64ConvertI32S).mem(Op.f64Store, 3, 0);
  }
  c.get(O).get(tB).op(Op.i32Add).set(O);
  c.get(g).i32(1).op(Op.i32Add).tee(g).get(NGRID).op(Op.i32Eq).begin(Op.if);
  writeBack();
  c.get(events).op(Op.return).op(Op.end);
  c.get(GRID).get(g).i32(3).op(Op.i32Shl).op(Op.i32Add).mem(Op.f64Load, 3, 0).set(tg);
  c.br(Op.br, 0).op(Op.end).op(Op.end);
  // The reaction: smallest j with Σ_{k≤j} a_k > u₂·a0; the last branch absorbs round-off.
  xoshiro();
  c.get(ru).op(Op.f64ConvertI32U).f64(TWO_POW_M32).op(Op.f64Mul).get(asum).op(Op.f64Mul).set(r);
  const fire = (j: number): void => {
    for (let p = m.changePtr[j]; p < m.changePtr[j + 1]; p++) {
      const i = m.changeIdx[p];
      const d = m.changeDelta[p];
      c.get(x[i]).i32(d).op(Op.i32Add).tee(x[i]);
      // A count leaving [0, 2^30] ends the call with −2: the JS kernel replays the cell (see compileWasmKernel).
      if (d > 0) c.i32(MAX_KERNEL_COUNT).op(Op.i32GtS);
      else c.i32(0).op(Op.i32LtS);
      c.begin(Op.if).f64(OUT_OF_RANGE).op(Op.return).op(Op.end);
    }
    for (let p = m.depPtr[j]; p < m.depPtr[j + 1]; p++) {
      propensity(m.depIdx[p]);
      c.set(a[m.depIdx[p]]);
    }
  };
  for (let j = 0; j < nR - 1; j++) {
    c.get(r).get(a[j]).op(Op.f64Sub).tee(r).f64(0).op(Op.f64Lt).begin(Op.if);
    fire(j);
    c.op(Op.else);
  }
  c.get(a[nR - 1]).f64(0).op(Op.f64Gt).begin(Op.if);
  fire(nR - 1);
  c.op(Op.end);
  for (let j = 0; j < nR - 1; j++) c.op(Op.end);
  // if (++events > maxEvents) return −1
  c.get(events).f64(1).op(Op.f64Add).tee(events).get(MAXEV).op(Op.f64Gt).begin(Op.if);
  writeBack();
  c.f64(-1).op(Op.return).op(Op.end);
  c.br(Op.br, 0).op(Op.end);
  c.op(Op.unreachable);

  const bytes = encodeModule({
    types: [
      { params: [F64], results: [F64] },
      { params: [I32, I32, I32, I32, F64], results: [F64] },
    ],
    imports: [{ module: "m", name: "log", type: 0 }, ...hillImports.map((j) => ({ module: "m", name: `h${j}`, type: 0 }))],
    func: { type: 1, locals, body: c, exportName: "run" },
    memory: { pages: Math.ceil(layout.dataEnd / 65536) + 1, exportName: "memory" },
  });
  return { bytes, layout, hillImports };
}

type RunFn = (grid: number, nGrid: number, out: number, stride: number, maxEvents: number) => number;

/**
 * Compiles the wasm kernel of a model (same contract as ssa/kernel.ts DirectKernel, bit-identical
 * to compileDirectKernel's samples, event counts, final counts and generator state).
 * @throws RangeError when the model cannot use it (see wasmKernelRefusal), or WebAssembly refuses the module.
 */
export function compileWasmKernel(m: Model): WasmKernel {
  const refusal = wasmKernelRefusal(m);
  if (refusal) throw new RangeError(`wasm kernel: ${refusal}`);
  const nS = m.nSpecies;
  const tables: (Float64Array | null)[] = [];
  for (let j = 0; j < m.nReactions; j++) {
    tables.push(m.law[j] === LawCode.HillActivation || m.law[j] === LawCode.HillRepression ? hillTable(m, j) : null);
  }
  const { bytes, layout, hillImports } = wasmKernelModule(m, tables);
  const imports: Record<string, (v: number) => number> = { log: Math.log };
  for (const j of hillImports) imports[`h${j}`] = (v: number) => hillPropensity(m, j, v);
  const api = wasmApi() as WasmApi;
  const instance = new api.Instance(new api.Module(bytes), { m: imports });
  const memory = instance.exports.memory as WasmMemory;
  const run = instance.exports.run as RunFn;

  let f64 = new Float64Array(memory.buffer);
  let i32 = new Int32Array(memory.buffer);
  f64.set(POW2_TABLE, P2_BASE / 8);
  f64.set(LOG1P_TABLE, LT_BASE / 8);
  tables.forEach((tb, j) => tb && f64.set(tb, layout.tables[j] / 8));

  let top = layout.dataEnd;
  const alloc = (bytes: number): number => {
    const p = top;
    top = align8(top + bytes);
    if (top > memory.buffer.byteLength) {
      memory.grow(Math.ceil((top - memory.buffer.byteLength) / 65536));
      f64 = new Float64Array(memory.buffer);
      i32 = new Int32Array(memory.buffer);
    }
    return p;
  };
  const region = () => ({ ptr: 0, cap: 0 });
  const gridR = region(), blockR = region(), copyR = region();
  let lastGrid: Float64Array | null = null;
  const reserve = (r: { ptr: number; cap: number }, values: number): void => {
    if (values <= r.cap) return;
    const cap = Math.max(values, 2 * r.cap);
    r.ptr = alloc(8 * cap);
    r.cap = cap;
    if (r === gridR) lastGrid = null;
  };
  const loadGrid = (grid: Float64Array): void => {
    if (grid === lastGrid && grid.length <= gridR.cap && f64[gridR.ptr / 8 + grid.length - 1] === grid[grid.length - 1]) return;
    reserve(gridR, grid.length);
    f64.set(grid, gridR.ptr / 8);
    lastGrid = grid;
  };

  // The JS kernel, for cells whose counts leave [0, 2^30] (int32 counts here; JS numbers there).
  let js: DirectKernel | null = null;
  const replay: DirectKernel = (x, rs, grid, nGrid, out, o, B, maxEvents) => (js ??= compileDirectKernel(m))(x, rs, grid, nGrid, out, o, B, maxEvents);

  const kernel = ((x, rs, grid, nGrid, out, o, B, maxEvents) => {
    for (let i = 0; i < nS; i++) {
      const v = x[i];
      if (!(v >= 0 && v <= MAX_KERNEL_COUNT && v === Math.floor(v))) return replay(x, rs, grid, nGrid, out, o, B, maxEvents);
    }
    loadGrid(grid);
    const xAt = layout.x / 8;
    for (let i = 0; i < nS; i++) f64[xAt + i] = x[i];
    const rsAt = layout.rs / 4;
    for (let k = 0; k < 4; k++) i32[rsAt + k] = rs[k];
    // Bounds are checked once here (a view detached by memory growth has length 0).
    if (o + (nGrid * nS - 1) * B >= out.length) throw new RangeError("wasm kernel: the sample array is too small for the grid");
    const direct = out.buffer === memory.buffer;
    let events: number;
    if (direct) {
      events = run(gridR.ptr, nGrid, out.byteOffset + 8 * o, 8 * B, maxEvents);
    } else {
      // A large replay into the caller's own array would leave its copy in this kernel's memory
      // for the model's lifetime: the JS kernel writes it in place instead (same samples).
      if (nGrid * nS > MAX_COPY_VALUES) return replay(x, rs, grid, nGrid, out, o, B, maxEvents);
      reserve(copyR, nGrid * nS);
      events = run(gridR.ptr, nGrid, copyR.ptr, 8, maxEvents);
    }
    // x and rs are untouched until here, so the replay starts from the cell's own state.
    if (events === OUT_OF_RANGE) return replay(x, rs, grid, nGrid, out, o, B, maxEvents);
    for (let i = 0; i < nS; i++) x[i] = f64[xAt + i];
    for (let k = 0; k < 4; k++) rs[k] = i32[rsAt + k];
    if (!direct) {
      const n = i32[layout.gOut / 4] * nS;
      const from = copyR.ptr / 8;
      for (let k = 0; k < n; k++) out[o + k * B] = f64[from + k];
    }
    return events;
  }) as WasmKernel;
  kernel.block = (values: number, gridLength: number): Float64Array | null => {
    try {
      reserve(gridR, gridLength);
      reserve(blockR, values);
    } catch {
      return null; // the memory cannot grow that far (wasm32: at most 4 GB): the caller uses its own array
    }
    return new Float64Array(memory.buffer, blockR.ptr, values);
  };
  return kernel;
}
