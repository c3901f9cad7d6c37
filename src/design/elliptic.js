/**
 * Complete elliptic integral of the first kind and the Jacobi elliptic functions sn, cn, dn, as
 * needed by the closed-form 90° all-pass design (allpass-pair.ts).
 *
 * Hand-written rather than taken from a library: the general-purpose packages that provide these
 * (e.g. @stdlib) pull well over a hundred small packages into a consumer's install for two
 * functions of a dozen lines each. The tests check these against @stdlib as an outside reference.
 *
 * Parameter convention: `m = k²` (the parameter), as in Abramowitz & Stegun ch. 16–17 and @stdlib.
 * Each function also accepts the complementary parameter `m1 = 1 − m` so that callers near m = 1
 * (very wide band ratios, k' = 1/B tiny) do not lose the digits that `1 − m` would cancel.
 */
import { OrthotoneError } from '../core/errors.js';

const EPS = 2 ** -52;
function checkParameter(m, m1) {
  if (!Number.isFinite(m) || !Number.isFinite(m1) || m < 0 || m1 < 0 || Math.abs(m + m1 - 1) > 1e-12) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `elliptic parameter m ${m} (complement ${m1}) must satisfy 0 ≤ m ≤ 1 with m1 = 1 − m: pass m = k², not k`,
      m,
    );
  }
}
/**
 * Arithmetic–geometric mean of 1 and `b` (0 ≤ b ≤ 1), quadratically convergent.
 * Reference: Abramowitz & Stegun 17.6.
 */
function agm1(b) {
  let a = 1;
  let g = b;
  for (let i = 0; i < 64 && Math.abs(a - g) > EPS * a; i++) {
    const an = 0.5 * (a + g);
    g = Math.sqrt(a * g);
    a = an;
  }
  return 0.5 * (a + g);
}
/**
 * Complete elliptic integral of the first kind `K(m) = ∫₀^{π/2} dθ / √(1 − m·sin²θ)`, by the
 * arithmetic–geometric mean: `K = π / (2·AGM(1, √(1−m)))`.
 * @param m parameter `m = k²`, 0 ≤ m ≤ 1 (K(1) = +∞).
 * @param m1 optional complementary parameter `1 − m`, given exactly when m is close to 1.
 * @returns K(m), dimensionless.
 * @throws {OrthotoneError} INVALID_ARGUMENT when m is outside [0, 1] or not finite.
 * Reference: Abramowitz & Stegun, Handbook of Mathematical Functions, 17.6.
 */
export function ellipK(m, m1 = 1 - m) {
  checkParameter(m, m1);
  if (m1 === 0) return Number.POSITIVE_INFINITY;
  return Math.PI / (2 * agm1(Math.sqrt(m1)));
}
/**
 * Jacobi elliptic functions sn, cn, dn of argument `u` and parameter `m = k²`, by the
 * arithmetic–geometric mean and descending Landen transformation (A&S 16.4.2–16.4.3), with
 * `dn = √(m1 + m·cn²)` (exact, and free of the 0/0 of A&S 16.4.3 at u = K).
 * @param u argument (real); accuracy is best for |u| up to a few K(m).
 * @param m parameter `m = k²`, 0 ≤ m ≤ 1.
 * @param m1 optional complementary parameter `1 − m`, given exactly when m is close to 1.
 * @returns `{ sn, cn, dn }`.
 * @throws {OrthotoneError} INVALID_ARGUMENT when m is outside [0, 1] or u is not finite.
 * Reference: Abramowitz & Stegun, Handbook of Mathematical Functions, 16.4 (AGM method).
 */
export function jacobiSnCnDn(u, m, m1 = 1 - m) {
  checkParameter(m, m1);
  if (!Number.isFinite(u)) {
    throw new OrthotoneError('INVALID_ARGUMENT', `elliptic argument u ${u} must be a finite number`, u);
  }
  if (m === 0) return { sn: Math.sin(u), cn: Math.cos(u), dn: 1 };
  if (m1 === 0) {
    const s = 1 / Math.cosh(u);
    return { sn: Math.tanh(u), cn: s, dn: s };
  }
  // Descending AGM chain a_n, c_n (A&S 16.4.2): a0 = 1, b0 = √m1, c0 = √m.
  const as = [1];
  const cs = [Math.sqrt(m)];
  let a = 1;
  let b = Math.sqrt(m1);
  let n = 0;
  while (n < 64) {
    const an = 0.5 * (a + b);
    const cn = 0.5 * (a - b);
    b = Math.sqrt(a * b);
    a = an;
    n++;
    as.push(a);
    cs.push(cn);
    if (Math.abs(cn) <= EPS * a) break;
  }
  // φ_N = 2^N a_N u, then φ_{n−1} = (φ_n + asin(c_n/a_n · sin φ_n)) / 2.
  let phi = 2 ** n * as[n] * u;
  for (let j = n; j > 0; j--) {
    phi = 0.5 * (phi + Math.asin((cs[j] / as[j]) * Math.sin(phi)));
  }
  const sn = Math.sin(phi);
  const cn = Math.cos(phi);
  return { sn, cn, dn: Math.sqrt(m1 + m * cn * cn) };
}
/**
 * Nome `q = exp(−π·K(m1)/K(m))` of the parameter m (m1 = 1 − m).
 * @param m parameter `m = k²`, 0 ≤ m < 1.
 * @param m1 optional complementary parameter `1 − m`.
 * @returns q, 0 ≤ q < 1.
 * @throws {OrthotoneError} INVALID_ARGUMENT when m is outside [0, 1).
 * Reference: Abramowitz & Stegun 16.27.
 */
export function ellipticNome(m, m1 = 1 - m) {
  checkParameter(m, m1);
  if (m === 0) return 0;
  return Math.exp((-Math.PI * ellipK(m1, m)) / ellipK(m, m1));
}
