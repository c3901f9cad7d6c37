/**
 * Dense linear algebra for the small systems of the null fits (at most 6×6 for the paraboloid,
 * a few dozen unknowns for the correction filter). Hand-written because the systems are tiny and
 * allocation-light code here is simpler than pulling in a general matrix library; Gaussian
 * elimination with partial pivoting (Golub & Van Loan, Matrix Computations, 4th ed., §3.4).
 */
/**
 * Solves `A·x = b` in place by Gaussian elimination with partial pivoting.
 * @param a row-major n×n matrix (overwritten).
 * @param b right-hand side of length n (overwritten with the solution).
 * @param n system size.
 * @returns false when the matrix is singular to working precision (b then holds no solution).
 * @throws never
 */
export function solveInPlace(a, b, n) {
  let scale = 0;
  for (let i = 0; i < n * n; i++) scale = Math.max(scale, Math.abs(a[i]));
  const tiny = scale * 1e-14;
  if (!(scale > 0)) return false;
  for (let col = 0; col < n; col++) {
    let piv = col;
    let best = Math.abs(a[col * n + col]);
    for (let r = col + 1; r < n; r++) {
      const v = Math.abs(a[r * n + col]);
      if (v > best) {
        best = v;
        piv = r;
      }
    }
    if (!(best > tiny)) return false;
    if (piv !== col) {
      for (let k = 0; k < n; k++) {
        const t = a[col * n + k];
        a[col * n + k] = a[piv * n + k];
        a[piv * n + k] = t;
      }
      const t = b[col];
      b[col] = b[piv];
      b[piv] = t;
    }
    const d = a[col * n + col];
    for (let r = col + 1; r < n; r++) {
      const f = a[r * n + col] / d;
      if (f === 0) continue;
      for (let k = col; k < n; k++) a[r * n + k] = a[r * n + k] - f * a[col * n + k];
      b[r] = b[r] - f * b[col];
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let s = b[r];
    for (let k = r + 1; k < n; k++) s -= a[r * n + k] * b[k];
    b[r] = s / a[r * n + r];
  }
  return true;
}
/**
 * Inverse of a small n×n matrix (row-major), column by column.
 * @returns the inverse, or undefined when singular.
 * @throws never
 */
export function invert(a, n) {
  const out = new Float64Array(n * n);
  const work = new Float64Array(n * n);
  const col = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    work.set(a);
    col.fill(0);
    col[j] = 1;
    if (!solveInPlace(work, col, n)) return undefined;
    for (let i = 0; i < n; i++) out[i * n + j] = col[i];
  }
  return out;
}
/**
 * Weighted linear least squares `min Σ w_i (row_i·x − y_i)²` by the normal equations, with an
 * optional ridge term `ridge·|x|²` (0 for none).
 * @param rows design matrix rows, each of length m.
 * @returns the solution, or undefined when the normal matrix is singular.
 * Method: normal equations solved by {@link solveInPlace} (Golub & Van Loan, Matrix Computations,
 * 4th ed., §5.3, section from memory).
 * @throws never
 */
export function weightedLeastSquares(rows, y, w, m, ridge = 0) {
  const ata = new Float64Array(m * m);
  const atb = new Float64Array(m);
  for (let i = 0; i < rows.length; i++) {
    const r = rows[i];
    const wi = w[i];
    if (!(wi > 0)) continue;
    for (let p = 0; p < m; p++) {
      atb[p] = atb[p] + wi * r[p] * y[i];
      for (let q = 0; q < m; q++) ata[p * m + q] = ata[p * m + q] + wi * r[p] * r[q];
    }
  }
  if (ridge > 0) for (let p = 0; p < m; p++) ata[p * m + p] = ata[p * m + p] + ridge;
  return solveInPlace(ata, atb, m) ? atb : undefined;
}
