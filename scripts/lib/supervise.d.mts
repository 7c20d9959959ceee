// Types of supervise.mjs for the TypeScript tests that load it.
import type { ChildProcess } from "node:child_process";

export interface Supervised {
  readonly child: ChildProcess;
  readonly starts: number;
  stop(stopOne: (child: ChildProcess) => Promise<void>): Promise<void>;
}

export function superviseChild(options: {
  name: string;
  start: () => ChildProcess;
  log: (message: string) => void;
  baseDelayMs?: number;
  maxDelayMs?: number;
  resetAfterMs?: number;
  onStart?: (child: ChildProcess, starts: number) => void;
}): Supervised;
