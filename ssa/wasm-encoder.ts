/**
 * A minimal WebAssembly binary encoder (WebAssembly Core Specification 1.0, "Binary format"):
 * just what ssa/wasm-kernel.ts needs to emit one function per circuit — types, imported
 * functions, one memory, one exported function, and a code builder over the numeric, memory and
 * control instructions it uses. Pure: no I/O.
 */

/** Value types (spec 5.3.1). */
export const I32 = 0x7f;
export const F64 = 0x7c;
export type ValType = typeof I32 | typeof F64;

/** Opcodes used by the kernel (spec 5.4). */
export const Op = {
  unreachable: 0x00,
  block: 0x02,
  loop: 0x03,
  if: 0x04,
  else: 0x05,
  end: 0x0b,
  br: 0x0c,
  brIf: 0x0d,
  return: 0x0f,
  call: 0x10,
  localGet: 0x20,
  localSet: 0x21,
  localTee: 0x22,
  i32Load: 0x28,
  f64Load: 0x2b,
  i32Store: 0x36,
  f64Store: 0x39,
  i32Const: 0x41,
  f64Const: 0x44,
  i32Eqz: 0x45,
  i32Eq: 0x46,
  i32LtS: 0x48,
  i32LtU: 0x49,
  i32GtU: 0x4b,
  i32GtS: 0x4a,
  i32GeS: 0x4e,
  f64Lt: 0x63,
  f64Gt: 0x64,
  f64Ge: 0x66,
  i32Clz: 0x67,
  i32Add: 0x6a,
  i32Sub: 0x6b,
  i32Mul: 0x6c,
  i32And: 0x71,
  i32Or: 0x72,
  i32Xor: 0x73,
  i32Shl: 0x74,
  i32ShrU: 0x76,
  i32Rotl: 0x77,
  f64Neg: 0x9a,
  f64Add: 0xa0,
  f64Sub: 0xa1,
  f64Mul: 0xa2,
  f64Div: 0xa3,
  i32TruncF64S: 0xaa,
  f64ConvertI32S: 0xb7,
  f64ConvertI32U: 0xb8,
} as const;

/** Block type: no result, or one value (spec 5.4.1). */
export const VOID = 0x40;

function uleb(n: number, out: number[]): void {
  if (!(Number.isInteger(n) && n >= 0)) throw new RangeError(`uleb: ${n}`);
  do {
    let b = n % 128;
    n = Math.floor(n / 128);
    if (n > 0) b |= 0x80;
    out.push(b);
  } while (n > 0);
}

function sleb(n: number, out: number[]): void {
  if (!Number.isInteger(n)) throw new RangeError(`sleb: ${n}`);
  for (;;) {
    const b = n & 0x7f;
    n = Math.floor(n / 128);
    if ((n === 0 && (b & 0x40) === 0) || (n === -1 && (b & 0x40) !== 0)) {
      out.push(b);
      return;
    }
    out.push(b | 0x80);
  }
}

const f64Bytes = new DataView(new ArrayBuffer(8));

/** Instruction stream of one function body. */
export class Code {
  readonly bytes: number[] = [];
  op(...ops: number[]): this {
    for (const o of ops) this.bytes.push(o);
    return this;
  }
  i32(v: number): this {
    this.bytes.push(Op.i32Const);
    sleb(v | 0, this.bytes);
    return this;
  }
  f64(v: number): this {
    this.bytes.push(Op.f64Const);
    f64Bytes.setFloat64(0, v, true);
    for (let k = 0; k < 8; k++) this.bytes.push(f64Bytes.getUint8(k));
    return this;
  }
  get(local: number): this {
    this.bytes.push(Op.localGet);
    uleb(local, this.bytes);
    return this;
  }
  set(local: number): this {
    this.bytes.push(Op.localSet);
    uleb(local, this.bytes);
    return this;
  }
  tee(local: number): this {
    this.bytes.push(Op.localTee);
    uleb(local, this.bytes);
    return this;
  }
  call(fn: number): this {
    this.bytes.push(Op.call);
    uleb(fn, this.bytes);
    return this;
  }
  /** Memory access with alignment log2 `align` and constant byte offset. */
  mem(op: number, align: number, offset = 0): this {
    this.bytes.push(op);
    uleb(align, this.bytes);
    uleb(offset, this.bytes);
    return this;
  }
  /** block / loop / if with a block type (VOID or a value type). */
  begin(op: typeof Op.block | typeof Op.loop | typeof Op.if, type: number = VOID): this {
    this.bytes.push(op, type);
    return this;
  }
  br(op: typeof Op.br | typeof Op.brIf, depth: number): this {
    this.bytes.push(op);
    uleb(depth, this.bytes);
    return this;
  }
}

export interface FuncType {
  params: ValType[];
  results: ValType[];
}

export interface ModuleSpec {
  types: FuncType[];
  /** Imported functions (module, name, type index); they take the first function indices. */
  imports: { module: string; name: string; type: number }[];
  /** The one defined function: its type, extra locals (after the params) and body (without the final end). */
  func: { type: number; locals: ValType[]; body: Code; exportName: string };
  /** Linear memory: initial pages (64 KiB each), exported under this name. */
  memory: { pages: number; exportName: string };
}

function section(id: number, payload: number[], out: number[]): void {
  out.push(id);
  uleb(payload.length, out);
  for (const b of payload) out.push(b);
}

/** A name (ASCII only: the kernel's import and export names). */
function name(s: string, out: number[]): void {
  if (!/^[\x20-\x7e]*$/.test(s)) throw new RangeError(`name must be ASCII: ${s}`);
  uleb(s.length, out);
  for (let k = 0; k < s.length; k++) out.push(s.charCodeAt(k));
}

/** The module's bytes. */
export function encodeModule(spec: ModuleSpec): Uint8Array<ArrayBuffer> {
  const out: number[] = [0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00];
  const types: number[] = [];
  uleb(spec.types.length, types);
  for (const t of spec.types) {
    types.push(0x60);
    uleb(t.params.length, types);
    types.push(...t.params);
    uleb(t.results.length, types);
    types.push(...t.results);
  }
  section(1, types, out);
  const imports: number[] = [];
  uleb(spec.imports.length, imports);
  for (const im of spec.imports) {
    name(im.module, imports);
    name(im.name, imports);
    imports.push(0x00);
    uleb(im.type, imports);
  }
  section(2, imports, out);
  const funcs: number[] = [];
  uleb(1, funcs);
  uleb(spec.func.type, funcs);
  section(3, funcs, out);
  const mem: number[] = [1, 0x00];
  uleb(spec.memory.pages, mem);
  section(5, mem, out);
  const exports: number[] = [];
  uleb(2, exports);
  name(spec.func.exportName, exports);
  exports.push(0x00);
  uleb(spec.imports.length, exports);
  name(spec.memory.exportName, exports);
  exports.push(0x02);
  uleb(0, exports);
  section(7, exports, out);
  // Locals, run-length encoded by type.
  const body: number[] = [];
  const groups: [number, ValType][] = [];
  for (const t of spec.func.locals) {
    const last = groups[groups.length - 1];
    if (last && last[1] === t) last[0]++;
    else groups.push([1, t]);
  }
  uleb(groups.length, body);
  for (const [n, t] of groups) {
    uleb(n, body);
    body.push(t);
  }
  for (const b of spec.func.body.bytes) body.push(b);
  body.push(Op.end);
  const code: number[] = [];
  uleb(1, code);
  uleb(body.length, code);
  for (const b of body) code.push(b);
  section(10, code, out);
  return Uint8Array.from(out);
}
