/*
 * Host helper of the orthotone firmware kit (uses libm; not for the per-sample path).
 * The conversions are the ones src/generate/fixed-point.ts uses, so a kit set up here and the
 * library's model apply the same trim words.
 */
#include "ortho_host.h"

#include <math.h>

#define ORTHO_PI 3.14159265358979323846

#if ORTHO_ARITH != ORTHO_ARITH_FLOAT
/* round(v * 2^frac), ties away from zero, saturated to +-(2^(bits-1) - 1) (symmetric, as the
 * coefficient tables are rounded). */
static long ortho_code(double v, int frac, int bits) {
  const double scale = ldexp(1.0, frac);
  const double max = ldexp(1.0, bits - 1) - 1.0;
  double code = floor(fabs(v) * scale + 0.5);
  if (code > max) code = max;
  return (long)(v < 0 ? -code : code);
}
#endif

ortho_sample_t ortho_sample_from_full_scale(double x) {
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
  return (float)x;
#else
  const double max = ldexp(1.0, ORTHO_IO_BITS - 1) - 1.0;
  double code;
  if (!(x == x)) return 0;
  code = floor(x * ldexp(1.0, ORTHO_IO_BITS - 1) + 0.5);
  if (code > max) code = max;
  if (code < -max - 1.0) code = -max - 1.0;
  return (ortho_sample_t)code;
#endif
}

double ortho_sample_to_full_scale(ortho_sample_t v) {
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
  return (double)v;
#else
  return ldexp((double)v, -(ORTHO_IO_BITS - 1));
#endif
}

int ortho_trims_from_units(ortho_trims_t *t, double gain_db, double phase_deg, double skew_samples,
                           double dc_i, double dc_q, int lower_sideband) {
  double g, phi, c, sn, pos, mu, h[4];
  int k, whole;
  if (!(fabs(gain_db) <= 6.0) || !(fabs(phase_deg) <= 45.0) || !(fabs(dc_i) <= 1.0) ||
      !(fabs(dc_q) <= 1.0) || !(fabs(skew_samples) <= (double)ORTHO_MAX_SKEW))
    return -1;
  g = pow(10.0, gain_db / 20.0);
  phi = phase_deg * ORTHO_PI / 180.0;
  c = g * cos(phi);
  sn = g * sin(phi);
  /* Skew: Q' delayed by ORTHO_MAX_SKEW + 1 + skew samples (I' by ORTHO_MAX_SKEW + 1); the whole
   * part picks the samples, the fraction mu the 4-point Lagrange taps at delays k-1, k, k+1, k+2. */
  pos = (double)(ORTHO_MAX_SKEW + 1) + skew_samples;
  whole = (int)floor(pos);
  mu = pos - (double)whole;
  h[0] = -mu * (mu - 1.0) * (mu - 2.0) / 6.0;
  h[1] = (mu + 1.0) * (mu - 1.0) * (mu - 2.0) / 2.0;
  h[2] = -(mu + 1.0) * mu * (mu - 2.0) / 2.0;
  h[3] = (mu + 1.0) * mu * (mu - 1.0) / 6.0;
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
  t->gain_cos = (float)c;
  t->gain_sin = (float)sn;
  t->dc_i = (float)dc_i;
  t->dc_q = (float)dc_q;
  for (k = 0; k < 4; k++) t->skew_taps[k] = (float)h[k];
#else
  t->gain_cos = (ortho_coef_t)ortho_code(c, ORTHO_COEF_BITS - 2, ORTHO_COEF_BITS);
  t->gain_sin = (ortho_coef_t)ortho_code(sn, ORTHO_COEF_BITS - 2, ORTHO_COEF_BITS);
  t->dc_i = (ortho_sample_t)ortho_code(dc_i, ORTHO_IO_BITS - 1, ORTHO_IO_BITS);
  t->dc_q = (ortho_sample_t)ortho_code(dc_q, ORTHO_IO_BITS - 1, ORTHO_IO_BITS);
  for (k = 0; k < 4; k++) t->skew_taps[k] = (ortho_coef_t)ortho_code(h[k], ORTHO_COEF_BITS - 2, ORTHO_COEF_BITS);
#endif
  t->skew_whole = whole;
  t->lower_sideband = lower_sideband ? 1 : 0;
  return 0;
}
