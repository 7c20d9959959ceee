// Keeps a long-running child process alive for `npm start` (the web app, the worker): when it
// exits while we are not stopping, it is started again after a growing delay, and nothing else
// is touched. A crash of one process (a runaway request filling the web app's heap, say) then
// never takes the worker, the mail fake or PostgreSQL down with it.
// Plain Node (no dependencies), like the rest of scripts/lib.

/**
 * Starts `start()` and restarts it whenever it exits: after `baseDelayMs`, doubling with each
 * exit in a row up to `maxDelayMs`; an exit after `resetAfterMs` of uptime counts as the first.
 * Returns a handle: `child` (the current process), `starts` (how many were started), and
 * `stop(stopOne)`, which cancels any pending restart and awaits `stopOne(child)`.
 */
export function superviseChild({ name, start, log, baseDelayMs = 1000, maxDelayMs = 30_000, resetAfterMs = 60_000, onStart }) {
  let child;
  let stopping = false;
  let starts = 0;
  let exitsInARow = 0;
  let timer;

  function launch() {
    const startedAt = Date.now();
    child = start();
    starts += 1;
    onStart?.(child, starts);
    child.once("exit", (code, signal) => {
      if (stopping) return;
      exitsInARow = Date.now() - startedAt >= resetAfterMs ? 1 : exitsInARow + 1;
      const delay = Math.min(maxDelayMs, baseDelayMs * 2 ** Math.min(exitsInARow - 1, 20));
      log(`${name} exited (${code ?? signal}); restarting in ${delay / 1000} s`);
      timer = setTimeout(() => {
        timer = undefined;
        if (!stopping) launch();
      }, delay);
    });
  }
  launch();

  return {
    get child() { return child; },
    get starts() { return starts; },
    async stop(stopOne) {
      stopping = true;
      if (timer) clearTimeout(timer);
      await stopOne(child);
    },
  };
}
