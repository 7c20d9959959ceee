/**
 * The time grid shared by ensembles and the mean-field trace (CONTRACT.md §2: 0, D, 2D, …, T).
 * Its own module so that worker threads need not load the ODE code. Pure: no I/O.
 */

/**
 * The grid 0, dt, 2dt, …: k·dt for k = 0 … ⌊tEnd/dt⌋ (with a 1e-9 relative allowance so that
 * 10/0.1 gives 101 points), plus tEnd itself when dt does not divide it.
 * @throws RangeError unless 0 < dt ≤ tEnd and the grid has at most 1e7 points.
 */
export function makeGrid(tEnd: number, dt: number): Float64Array {
  if (!(Number.isFinite(tEnd) && tEnd > 0)) throw new RangeError(`tEnd must be > 0, got ${tEnd}`);
  if (!(Number.isFinite(dt) && dt > 0 && dt <= tEnd)) throw new RangeError(`dt must be in (0, tEnd], got ${dt}`);
  if (tEnd / dt > 1e7) throw new RangeError(`tEnd/dt gives more than 1e7 grid points`);
  const steps = Math.floor(tEnd / dt + 1e-9);
  const lastOnGrid = steps * dt;
  const extra = Math.abs(lastOnGrid - tEnd) > 1e-9 * tEnd ? 1 : 0;
  const grid = new Float64Array(steps + 1 + extra);
  for (let k = 0; k <= steps; k++) grid[k] = k * dt;
  if (extra) grid[steps + 1] = tEnd;
  else grid[steps] = Math.min(grid[steps], tEnd);
  return grid;
}
