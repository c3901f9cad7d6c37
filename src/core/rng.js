/**
 * Creates a seeded generator. Same seed → same sequence everywhere. `seed` is taken as an unsigned
 * 32-bit integer (`seed >>> 0`); `state`, from {@link Rng.state}, resumes a generator exactly.
 * Methods: sfc32 (C. Doty-Humphrey, PractRand) for uniforms; Box–Muller for normals (G. E. P. Box &
 * M. E. Muller, "A Note on the Generation of Random Normal Deviates", Ann. Math. Stat. 29:610, 1958).
 * @throws never
 */
export function createRng(seed, state) {
  let s = seed >>> 0;
  const split = () => {
    s = (s + 0x9e3779b9) | 0;
    let z = s;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
    return (z ^ (z >>> 16)) >>> 0;
  };
  let a = state ? state[0] : split();
  let b = state ? state[1] : split();
  let c = state ? state[2] : split();
  let d = state ? state[3] : split();
  let spare = Number.NaN;
  const uniform = () => {
    const t = (((a + b) | 0) + d) | 0;
    d = (d + 1) | 0;
    a = b ^ (b >>> 9);
    b = (c + (c << 3)) | 0;
    c = (c << 21) | (c >>> 11);
    c = (c + t) | 0;
    return (t >>> 0) / 4294967296;
  };
  return {
    uniform,
    normal() {
      if (!Number.isNaN(spare)) {
        const v = spare;
        spare = Number.NaN;
        return v;
      }
      let u = uniform();
      while (u === 0) u = uniform();
      const v = uniform();
      const r = Math.sqrt(-2 * Math.log(u));
      spare = r * Math.sin(2 * Math.PI * v);
      return r * Math.cos(2 * Math.PI * v);
    },
    state: () => [a, b, c, d],
  };
}
