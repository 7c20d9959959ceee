/**
 * Small dense linear algebra for the deterministic side of the engine (ODE stiff solver, Newton,
 * LNA): LU with partial pivoting on row-major Float64Arrays, the continuous Lyapunov equation,
 * and conservation analysis of a stoichiometry matrix. Pure: no I/O, no allocation inside the
 * LU kernels (callers hand in scratch). Eigenvalues and least squares come from ml-matrix.
 */
import { EigenvalueDecomposition, Matrix, solve as mlSolve } from "ml-matrix";

/**
 * LU factorisation with partial pivoting, in place: `a` (n×n, row-major) becomes L (unit lower,
 * below the diagonal) and U (on and above). `piv[i]` is the row swapped into position i.
 * Ref: Golub & Van Loan, Matrix Computations, Alg. 3.4.1 (textbook).
 * Returns false when a pivot is exactly zero or not finite (the matrix is singular to working
 * precision); `a` is then garbage.
 */
export function luFactor(a: Float64Array, n: number, piv: Int32Array): boolean {
  for (let k = 0; k < n; k++) {
    let p = k;
    let best = Math.abs(a[k * n + k]);
    for (let i = k + 1; i < n; i++) {
      const v = Math.abs(a[i * n + k]);
      if (v > best) {
        best = v;
        p = i;
      }
    }
    piv[k] = p;
    if (!(best > 0) || !Number.isFinite(best)) return false;
    if (p !== k) {
      for (let j = 0; j < n; j++) {
        const t = a[k * n + j];
        a[k * n + j] = a[p * n + j];
        a[p * n + j] = t;
      }
    }
    const inv = 1 / a[k * n + k];
    for (let i = k + 1; i < n; i++) {
      const lik = (a[i * n + k] *= inv);
      if (lik !== 0) for (let j = k + 1; j < n; j++) a[i * n + j] -= lik * a[k * n + j];
    }
  }
  return true;
}

/** Solves (LU)·x = b in place (b becomes x), with `lu`, `piv` from luFactor. */
export function luSolve(lu: Float64Array, n: number, piv: Int32Array, b: Float64Array): void {
  for (let k = 0; k < n; k++) {
    const p = piv[k];
    if (p !== k) {
      const t = b[k];
      b[k] = b[p];
      b[p] = t;
    }
  }
  for (let i = 1; i < n; i++) {
    let s = b[i];
    for (let j = 0; j < i; j++) s -= lu[i * n + j] * b[j];
    b[i] = s;
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = b[i];
    for (let j = i + 1; j < n; j++) s -= lu[i * n + j] * b[j];
    b[i] = s / lu[i * n + i];
  }
}

/**
 * Solves A·x = b for a square A (row-major, not modified).
 * @throws RangeError when A is singular to working precision.
 */
export function solveLinear(a: Float64Array, n: number, b: Float64Array): Float64Array {
  const lu = Float64Array.from(a);
  const piv = new Int32Array(n);
  if (!luFactor(lu, n, piv)) throw new RangeError("solveLinear: matrix is singular");
  const x = Float64Array.from(b);
  luSolve(lu, n, piv, x);
  return x;
}

/** C = A·B for row-major A (n×m) and B (m×p). */
export function matMul(a: Float64Array, b: Float64Array, n: number, m: number, p: number): Float64Array {
  const c = new Float64Array(n * p);
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < m; k++) {
      const aik = a[i * m + k];
      if (aik === 0) continue;
      for (let j = 0; j < p; j++) c[i * p + j] += aik * b[k * p + j];
    }
  }
  return c;
}

/** Aᵀ for row-major A (n×m), as m×n. */
export function transpose(a: Float64Array, n: number, m: number): Float64Array {
  const t = new Float64Array(m * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < m; j++) t[j * n + i] = a[i * m + j];
  return t;
}

export interface Complex {
  re: number;
  im: number;
}

/**
 * Eigenvalues of a real square matrix (row-major), sorted by real part descending, then
 * imaginary part descending. Uses ml-matrix's EigenvalueDecomposition (Hessenberg QR, after the
 * EISPACK hqr2 routine).
 */
export function eigenvalues(a: Float64Array, n: number): Complex[] {
  if (n === 0) return [];
  const m = new Matrix(toRows(a, n, n));
  const evd = new EigenvalueDecomposition(m, { assumeSymmetric: false });
  const re = evd.realEigenvalues;
  const im = evd.imaginaryEigenvalues;
  const out: Complex[] = [];
  for (let i = 0; i < n; i++) out.push({ re: re[i], im: im[i] });
  out.sort((x, y) => y.re - x.re || y.im - x.im);
  return out;
}

function toRows(a: Float64Array, n: number, m: number): number[][] {
  const rows: number[][] = [];
  for (let i = 0; i < n; i++) rows.push(Array.from(a.subarray(i * m, i * m + m)));
  return rows;
}

/** Largest |entry| of a vector or matrix. */
export function maxAbs(a: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) {
    const v = Math.abs(a[i]);
    if (v > m) m = v;
  }
  return m;
}

/** Largest n at which lyapunov() solves the Kronecker system directly (n(n+1)/2 unknowns). */
const LYAPUNOV_DIRECT_MAX = 40;

/**
 * Solves the continuous Lyapunov equation A·Σ + Σ·Aᵀ + D = 0 for symmetric Σ, with A (n×n,
 * row-major) stable and D symmetric. Ref: van Kampen, Stochastic Processes in Physics and
 * Chemistry, ch. X (linear noise approximation); Elf & Ehrenberg 2003, Genome Res 13:2475.
 * For n ≤ 40 the equation is solved exactly as a linear system in the n(n+1)/2 entries of the
 * upper triangle (the Kronecker form (I⊗A + A⊗I)·vec Σ = −vec D, reduced by symmetry), then
 * refined once; above that by the Cayley transform and squared Smith iteration, which converges
 * for any stable A (Smith 1968, SIAM J Appl Math 16:198; Penzl 1999 for the doubling form).
 * @throws RangeError when the system is singular (A has eigenvalues λi + λj = 0) or the iteration
 *   does not converge (A not stable).
 */
export function lyapunov(a: Float64Array, d: Float64Array, n: number): Float64Array {
  if (n === 0) return new Float64Array(0);
  const sigma = n <= LYAPUNOV_DIRECT_MAX ? lyapunovDirect(a, d, n) : lyapunovSmith(a, d, n);
  // One step of iterative refinement: solve for the residual's correction.
  if (n <= LYAPUNOV_DIRECT_MAX) {
    const r = lyapunovResidual(a, sigma, d, n);
    const corr = lyapunovDirect(a, r, n);
    for (let i = 0; i < n * n; i++) sigma[i] += corr[i];
  }
  return sigma;
}

/** R = A·Σ + Σ·Aᵀ + D (for checks and refinement). */
export function lyapunovResidual(a: Float64Array, sigma: Float64Array, d: Float64Array, n: number): Float64Array {
  const as = matMul(a, sigma, n, n, n);
  const r = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) r[i * n + j] = as[i * n + j] + as[j * n + i] + d[i * n + j];
  return r;
}

function lyapunovDirect(a: Float64Array, d: Float64Array, n: number): Float64Array {
  // Unknowns: Σ_ij for i ≤ j, index k(i,j). Equation (i,j), i ≤ j:
  //   Σ_m A_im Σ_mj + Σ_m Σ_im A_jm = −D_ij.
  const idx = new Int32Array(n * n);
  let m = 0;
  for (let i = 0; i < n; i++) for (let j = i; j < n; j++) idx[i * n + j] = idx[j * n + i] = m++;
  const mat = new Float64Array(m * m);
  const rhs = new Float64Array(m);
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      const row = idx[i * n + j];
      for (let k = 0; k < n; k++) {
        mat[row * m + idx[k * n + j]] += a[i * n + k];
        mat[row * m + idx[i * n + k]] += a[j * n + k];
      }
      rhs[row] = -d[i * n + j];
    }
  }
  const piv = new Int32Array(m);
  if (!luFactor(mat, m, piv)) throw new RangeError("lyapunov: singular system (eigenvalues of A sum to zero)");
  luSolve(mat, m, piv, rhs);
  const sigma = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) sigma[i * n + j] = rhs[idx[i * n + j]];
  return sigma;
}

function lyapunovSmith(a: Float64Array, d: Float64Array, n: number): Float64Array {
  // Cayley transform with shift p: A_d = (pI − A)⁻¹(pI + A), Q_d = 2p (pI − A)⁻¹ D (pI − A)⁻ᵀ,
  // then Σ = Σ_k A_d^k Q_d (A_dᵀ)^k by doubling. p = √(Π|λ|)^(1/n) is approximated by the
  // geometric mean of |diagonal| entries, a common practice choice that keeps ρ(A_d) < 1.
  let logSum = 0;
  let cnt = 0;
  for (let i = 0; i < n; i++) {
    const v = Math.abs(a[i * n + i]);
    if (v > 0) {
      logSum += Math.log(v);
      cnt++;
    }
  }
  const p = cnt ? Math.exp(logSum / cnt) : 1;
  const m = new Float64Array(n * n);
  for (let i = 0; i < n * n; i++) m[i] = -a[i];
  for (let i = 0; i < n; i++) m[i * n + i] += p;
  const piv = new Int32Array(n);
  if (!luFactor(m, n, piv)) throw new RangeError("lyapunov: pI − A is singular");
  const solveCols = (b: Float64Array): Float64Array => {
    // returns (pI − A)⁻¹·B for B n×n row-major
    const out = new Float64Array(n * n);
    const col = new Float64Array(n);
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) col[i] = b[i * n + j];
      luSolve(m, n, piv, col);
      for (let i = 0; i < n; i++) out[i * n + j] = col[i];
    }
    return out;
  };
  const pa = Float64Array.from(a);
  for (let i = 0; i < n; i++) pa[i * n + i] += p;
  let ak = solveCols(pa);
  const t = solveCols(d);
  let x = transpose(solveCols(transpose(t, n, n)), n, n);
  for (let i = 0; i < n * n; i++) x[i] *= 2 * p;
  for (let iter = 0; iter < 60; iter++) {
    const ax = matMul(ak, x, n, n, n);
    const axa = matMul(ax, transpose(ak, n, n), n, n, n);
    let change = 0;
    let size = 0;
    for (let i = 0; i < n * n; i++) {
      x[i] += axa[i];
      change = Math.max(change, Math.abs(axa[i]));
      size = Math.max(size, Math.abs(x[i]));
    }
    if (change <= 1e-15 * size) return symmetrize(x, n);
    ak = matMul(ak, ak, n, n, n);
    if (!Number.isFinite(change)) break;
  }
  x = symmetrize(x, n);
  throw new RangeError("lyapunov: iteration did not converge (is A stable?)");
}

function symmetrize(x: Float64Array, n: number): Float64Array {
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const v = 0.5 * (x[i * n + j] + x[j * n + i]);
      x[i * n + j] = x[j * n + i] = v;
    }
  }
  return x;
}

/**
 * Conservation analysis of a stoichiometry matrix S (nSpecies × nReactions, row-major): picks a
 * maximal set of linearly independent species rows (in order, greedily, by Gram–Schmidt with
 * re-orthogonalisation) and the link matrix L0 with S_dependent = L0 · S_independent, so that
 * y_dep = L0·y_ind + T with T constant (conserved moieties). Ref: Reder 1988, J Theor Biol 135:175;
 * Sauro & Ingalls 2004, Biophys Chem 109:1.
 */
export interface Conservation {
  independent: number[];
  dependent: number[];
  /** nDependent × nIndependent, row-major. */
  link: Float64Array;
}

export function conservationAnalysis(s: Float64Array, nSpecies: number, nReactions: number): Conservation {
  const basis: Float64Array[] = [];
  const independent: number[] = [];
  const dependent: number[] = [];
  for (let i = 0; i < nSpecies; i++) {
    const row = Float64Array.from(s.subarray(i * nReactions, (i + 1) * nReactions));
    const norm0 = Math.sqrt(dot(row, row));
    if (norm0 === 0) {
      dependent.push(i);
      continue;
    }
    for (let pass = 0; pass < 2; pass++) {
      for (const q of basis) {
        const c = dot(row, q);
        for (let k = 0; k < nReactions; k++) row[k] -= c * q[k];
      }
    }
    const norm = Math.sqrt(dot(row, row));
    if (norm > 1e-10 * norm0) {
      for (let k = 0; k < nReactions; k++) row[k] /= norm;
      basis.push(row);
      independent.push(i);
    } else dependent.push(i);
  }
  const r = independent.length;
  const nd = dependent.length;
  const link = new Float64Array(nd * r);
  if (nd > 0 && r > 0) {
    // S_Iᵀ (nR × r) · L0ᵀ (r × nd) = S_Dᵀ (nR × nd), consistent and of full column rank: QR.
    const sIt = new Matrix(nReactions, r);
    const sDt = new Matrix(nReactions, nd);
    for (let k = 0; k < nReactions; k++) {
      for (let c = 0; c < r; c++) sIt.set(k, c, s[independent[c] * nReactions + k]);
      for (let c = 0; c < nd; c++) sDt.set(k, c, s[dependent[c] * nReactions + k]);
    }
    const l0t = mlSolve(sIt, sDt);
    for (let dI = 0; dI < nd; dI++) {
      for (let c = 0; c < r; c++) {
        const v = l0t.get(c, dI);
        // Stoichiometries are small integers, so link entries are usually simple rationals;
        // snap round-off (|v − round(v)| < 1e-12) so conserved totals stay exact.
        const rv = Math.round(v);
        link[dI * r + c] = Math.abs(v - rv) < 1e-12 ? rv + 0 : v; // + 0 turns −0 into 0
      }
    }
  }
  return { independent, dependent, link };
}

function dot(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}
