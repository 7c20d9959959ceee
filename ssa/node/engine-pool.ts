/**
 * The one pool of worker threads of the engine (ssa/node/engine-task.ts): the chunks and finalize
 * steps of runs for the command line and the background worker (ssa/node/run-engine.ts), and a
 * server's engine work (a version's analysis, its counts table, one replayed cell). A bounded queue in front of the threads
 * refuses work it could not start soon (EngineBusyError), and a task that runs past its time
 * budget has its thread terminated (EngineTimeoutError), so no request can hold a thread, nor the
 * server's event loop, for longer than the budget. Node only.
 */
import { Piscina } from "piscina";

import { SLOT_STARTED, type EngineOutcome, type EngineTask } from "./engine-protocol";

export interface EnginePoolOptions {
  /** Absolute path of ssa/node/engine-task.ts, or of its bundled engine-task.mjs (a bundled server cannot find it from import.meta.url). */
  filename: string;
  /** Threads computing at once. */
  threads: number;
  /** Tasks that may wait for a thread; one more is refused at once (Infinity: no bound, for a run's own pool). */
  maxQueue: number;
  /** Longest a task may wait for a free thread before it is refused (Infinity: as long as it takes). */
  maxWaitMs: number;
  /** Heap limit of each thread (MB): a task that needs more ends its thread, not the server. Absent: Node's default. */
  maxHeapMb?: number;
  /** Threads started at once and kept however idle (default 0: started on demand). */
  minThreads?: number;
  /** How long an idle thread is kept (ms); default 5 minutes. */
  idleTimeoutMs?: number;
}

/** The pool cannot start the task soon enough: too many are queued, or it waited too long. */
export class EngineBusyError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "EngineBusyError";
  }
}

/** The task ran longer than its budget, or needed more memory than a thread may have; its thread was ended. */
export class EngineLimitError extends Error {
  constructor(readonly limit: "time" | "memory", message: string) {
    super(message);
    this.name = "EngineLimitError";
  }
}

const POLL_MS = 25;
/** A thread that is new loads tsx, the engine and the formula parser: seconds on a loaded machine. */
const THREAD_START_MS = 30_000;

export class EnginePool {
  private readonly pool: Piscina<{ task: EngineTask; started: Int32Array }, EngineOutcome>;
  private running = 0;
  private readonly waiting: { start: () => void; fail: (e: Error) => void }[] = [];

  constructor(private readonly o: EnginePoolOptions) {
    this.pool = new Piscina({
      filename: o.filename,
      minThreads: o.minThreads ?? 0,
      maxThreads: o.threads,
      // Threads load the formula parser once (about a second); keep them for the next request.
      idleTimeout: o.idleTimeoutMs ?? 5 * 60_000,
      // TypeScript sources need the loader in the thread; the engine bundle is plain JavaScript.
      execArgv: o.filename.endsWith(".ts") ? ["--import", "tsx"] : [],
      ...(o.maxHeapMb !== undefined ? { resourceLimits: { maxOldGenerationSizeMb: o.maxHeapMb } } : {}),
    });
  }

  /** Tasks running and waiting now. */
  get load(): { running: number; waiting: number } {
    return { running: this.running, waiting: this.waiting.length };
  }

  /**
   * Runs one task on a thread within `budgetMs` of its start.
   * @throws EngineBusyError when the queue is full or the task cannot start within maxWaitMs;
   *   EngineLimitError when it runs past `budgetMs` or out of memory; an AbortError when `signal` aborts.
   */
  async run(task: EngineTask, budgetMs: number, signal?: AbortSignal): Promise<EngineOutcome> {
    await this.acquire(signal);
    try {
      return await this.runOnThread(task, budgetMs, signal);
    } finally {
      this.release();
    }
  }

  /** Ends every thread (tasks in flight fail). */
  async close(): Promise<void> {
    await this.pool.destroy();
  }

  private acquire(signal?: AbortSignal): Promise<void> {
    if (this.running < this.o.threads) {
      this.running++;
      return Promise.resolve();
    }
    if (this.waiting.length >= this.o.maxQueue) {
      return Promise.reject(new EngineBusyError(`${this.running} computations are running and ${this.waiting.length} waiting`));
    }
    return new Promise<void>((resolve, reject) => {
      const entry = {
        start: () => {
          clearTimeout(timer);
          signal?.removeEventListener("abort", onAbort);
          this.running++;
          resolve();
        },
        fail: (e: Error) => {
          clearTimeout(timer);
          signal?.removeEventListener("abort", onAbort);
          reject(e);
        },
      };
      const drop = (e: Error) => {
        const i = this.waiting.indexOf(entry);
        if (i >= 0) this.waiting.splice(i, 1);
        entry.fail(e);
      };
      // setTimeout would fire at once for Infinity (it clamps to 1 ms): no timer then.
      const timer = Number.isFinite(this.o.maxWaitMs)
        ? setTimeout(() => drop(new EngineBusyError(`waited ${Math.round(this.o.maxWaitMs / 1000)} s for a free thread`)), this.o.maxWaitMs)
        : undefined;
      const onAbort = () => drop(signal!.reason instanceof Error ? signal!.reason : new Error("aborted"));
      signal?.addEventListener("abort", onAbort, { once: true });
      this.waiting.push(entry);
    });
  }

  private release(): void {
    this.running--;
    this.waiting.shift()?.start();
  }

  /**
   * The budget counts from the moment the thread begins the task (it sets a shared flag), not from
   * dispatch: a thread that is still starting (loading the engine) does not eat the task's budget.
   */
  private async runOnThread(task: EngineTask, budgetMs: number, signal?: AbortSignal): Promise<EngineOutcome> {
    const started = new Int32Array(new SharedArrayBuffer(Int32Array.BYTES_PER_ELEMENT));
    const ac = new AbortController();
    let verdict: Error | null = null;
    const dispatchedAt = performance.now();
    let startedAt = 0;
    const watch = setInterval(() => {
      const now = performance.now();
      if (!startedAt && Atomics.load(started, SLOT_STARTED) === 1) startedAt = now;
      if (startedAt && now - startedAt > budgetMs) verdict = new EngineLimitError("time", `took longer than ${Math.round(budgetMs / 1000)} s`);
      else if (!startedAt && now - dispatchedAt > THREAD_START_MS) verdict = new EngineBusyError("no thread could start the computation in time");
      if (verdict) ac.abort(verdict);
    }, POLL_MS);
    const onAbort = () => {
      verdict = signal!.reason instanceof Error ? signal!.reason : new Error("aborted");
      ac.abort(verdict);
    };
    signal?.addEventListener("abort", onAbort, { once: true });
    try {
      return await this.pool.run({ task, started }, { signal: ac.signal });
    } catch (e) {
      if (verdict) throw verdict;
      // A thread over its heap limit ends with ERR_WORKER_OUT_OF_MEMORY; the server lives on.
      if ((e as { code?: string }).code === "ERR_WORKER_OUT_OF_MEMORY") {
        throw new EngineLimitError("memory", `needed more than the ${this.o.maxHeapMb} MB of memory one computation may use`);
      }
      throw e;
    } finally {
      clearInterval(watch);
      signal?.removeEventListener("abort", onAbort);
    }
  }
}
