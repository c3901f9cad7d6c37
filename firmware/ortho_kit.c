/*
 * orthotone firmware kit: kernels. The arithmetic is stated once in ortho_kit.h and modelled bit
 * for bit by src/generate/fixed-point.ts in the orthotone library.
 *
 * All-pass sections use the one-multiplier form y[n] = a*(x[n] - y[n-m]) + x[n-m] (S. K. Mitra,
 * Digital Signal Processing, 4th ed., section 9.7). The FIR folds the type III antisymmetry and
 * skips zero taps: Q[n] = sum_k g_k*(x[n-c-k] - x[n-c+k]) over the non-zero g_k only.
 * Blocks are run over chunks of ORTHO_CHUNK samples in passes (generated per network in
 * ortho_sections.c), each taking up to four sections of both branches at once with their states
 * in locals: the recursions of a pass overlap in the CPU instead of waiting on each other.
 */
#include "ortho_arith.h"

#if ORTHO_ARITH != ORTHO_ARITH_FLOAT
/* The kit relies on arithmetic right shifts of negative values (implementation-defined in C99,
 * arithmetic on every compiler we know of); refuse to build where it is not so. */
typedef char ortho_arithmetic_shift_check[((-8) >> 1) == -4 ? 1 : -1];

#define ORTHO_F (ORTHO_COEF_BITS - 1)  /* coefficient fraction bits */
#define ORTHO_TF (ORTHO_COEF_BITS - 2) /* trim and skew tap fraction bits */
#define ORTHO_ONE(s) ((ortho_acc_t)1 << (s))
#if ORTHO_HEADROOM_BITS < 0 || ORTHO_HEADROOM_BITS > 12
#error "ORTHO_HEADROOM_BITS out of range"
#endif

static ortho_acc_t ortho_sat_io(ortho_acc_t v) {
  return v > ORTHO_SMAX ? (ortho_acc_t)ORTHO_SMAX : v < ORTHO_SMIN ? (ortho_acc_t)ORTHO_SMIN : v;
}
#else
#define ORTHO_ANTI_DENORMAL 1e-20f /* added at each all-pass branch input, removed at its output */
#endif

void ortho_trims_neutral(ortho_trims_t *t) {
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
  t->gain_cos = 1.0f;
  t->gain_sin = 0.0f;
  t->dc_i = 0.0f;
  t->dc_q = 0.0f;
  t->skew_taps[0] = 0.0f;
  t->skew_taps[1] = 1.0f;
  t->skew_taps[2] = 0.0f;
  t->skew_taps[3] = 0.0f;
#else
  t->gain_cos = (ortho_coef_t)ORTHO_ONE(ORTHO_TF);
  t->gain_sin = 0;
  t->dc_i = 0;
  t->dc_q = 0;
  t->skew_taps[0] = 0;
  t->skew_taps[1] = (ortho_coef_t)ORTHO_ONE(ORTHO_TF);
  t->skew_taps[2] = 0;
  t->skew_taps[3] = 0;
#endif
  t->lower_sideband = 0;
  t->skew_whole = ORTHO_MAX_SKEW + 1;
}

void ortho_reset(ortho_t *s) {
  int k;
#if ORTHO_KIND == ORTHO_KIND_ALLPASS
  for (k = 0; k < 4 * ORTHO_ATLEAST1(ORTHO_SECTIONS_I); k++) s->st_i[k] = 0;
  for (k = 0; k < 4 * ORTHO_ATLEAST1(ORTHO_SECTIONS_Q); k++) s->st_q[k] = 0;
  for (k = 0; k < ORTHO_ATLEAST1(ORTHO_DELAY_I); k++) s->line_i[k] = 0;
  for (k = 0; k < ORTHO_ATLEAST1(ORTHO_DELAY_Q); k++) s->line_q[k] = 0;
  s->pos_i = 0;
  s->pos_q = 0;
#else
  for (k = 0; k < 2 * ORTHO_FIR_TAPS; k++) s->hist[k] = 0;
  s->pos = 0;
#endif
#if ORTHO_MAX_SKEW > 0
  for (k = 0; k < 2 * (2 * ORTHO_MAX_SKEW + 4); k++) {
    s->skew_i[k] = 0;
    s->skew_q[k] = 0;
  }
  s->skew_pos = 0;
#endif
  for (k = 0; k < ORTHO_CHUNK; k++) {
    s->work_i[k] = 0;
    s->work_q[k] = 0;
  }
}

void ortho_set_trims(ortho_t *s, const ortho_trims_t *t) {
  s->trims = *t;
  s->coef_a = t->lower_sideband ? (ortho_coef_t)-t->gain_cos : t->gain_cos;
#if ORTHO_MAX_SKEW > 0
  if (s->trims.skew_whole < 1) s->trims.skew_whole = 1;
  if (s->trims.skew_whole > 2 * ORTHO_MAX_SKEW + 1) s->trims.skew_whole = 2 * ORTHO_MAX_SKEW + 1;
#endif
}

void ortho_init(ortho_t *s) {
  ortho_reset(s);
#if ORTHO_HAS_PROFILE
  ortho_set_trims(s, &ORTHO_PROFILE_TRIMS);
#else
  {
    ortho_trims_t t;
    ortho_trims_neutral(&t);
    ortho_set_trims(s, &t);
  }
#endif
}

/* ---- network input: sample to network word ---- */
static ortho_word_t ortho_to_network(ortho_sample_t x) {
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT && ORTHO_KIND == ORTHO_KIND_ALLPASS
  return x + ORTHO_ANTI_DENORMAL;
#elif ORTHO_ARITH == ORTHO_ARITH_FLOAT
  return x;
#elif ORTHO_ARITH == ORTHO_ARITH_Q15
  return (ortho_word_t)((ortho_acc_t)x * ORTHO_ONE(16 - ORTHO_HEADROOM_BITS));
#elif ORTHO_HEADROOM_BITS > 0
  return (ortho_word_t)(((ortho_acc_t)x + ORTHO_ONE(ORTHO_HEADROOM_BITS - 1)) >> ORTHO_HEADROOM_BITS);
#else
  return x;
#endif
}

#if ORTHO_KIND == ORTHO_KIND_ALLPASS
static void ortho_network(ortho_t *s, const ortho_sample_t *in, int n) {
  int j;
  for (j = 0; j < n; j++) {
    const ortho_word_t x = ortho_to_network(in[j]);
#if ORTHO_DELAY_I > 0
    s->work_i[j] = s->line_i[s->pos_i];
    s->line_i[s->pos_i] = x;
    if (++s->pos_i == ORTHO_DELAY_I) s->pos_i = 0;
#else
    s->work_i[j] = x;
#endif
#if ORTHO_DELAY_Q > 0
    s->work_q[j] = s->line_q[s->pos_q];
    s->line_q[s->pos_q] = x;
    if (++s->pos_q == ORTHO_DELAY_Q) s->pos_q = 0;
#else
    s->work_q[j] = x;
#endif
  }
  ortho_run_sections(s->work_i, s->work_q, n, s->st_i, s->st_q);
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
  for (j = 0; j < n; j++) {
    s->work_i[j] = s->work_i[j] - ORTHO_ANTI_DENORMAL;
    s->work_q[j] = s->work_q[j] - ORTHO_ANTI_DENORMAL;
  }
#endif
}
#else /* FIR */
static void ortho_network(ortho_t *s, const ortho_sample_t *in, int n) {
  int j, k;
  for (j = 0; j < n; j++) {
    const ortho_word_t *span;
    const ortho_word_t x = ortho_to_network(in[j]);
    s->hist[s->pos] = x;
    s->hist[s->pos + ORTHO_FIR_TAPS] = x;
    span = s->hist + s->pos + 1; /* span[i] = x[n - (N-1) + i], so x[n-m] = span[N-1-m] */
    if (++s->pos == ORTHO_FIR_TAPS) s->pos = 0;
    {
      const ortho_word_t *mid = span + ORTHO_FIR_CENTRE;
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
      float acc = 0.0f;
      for (k = 0; k < ORTHO_FIR_PAIRS; k++) {
        const int o = ORTHO_FIR_OFFSET[k];
        acc += ORTHO_FIR_COEF[k] * (mid[-o] - mid[o]);
      }
      s->work_q[j] = acc;
      s->work_i[j] = mid[0];
#else
      ortho_acc_t acc = ORTHO_ONE(ORTHO_F - 1);
      for (k = 0; k < ORTHO_FIR_PAIRS; k++) {
        const int o = ORTHO_FIR_OFFSET[k];
        acc += (ortho_acc_t)ORTHO_FIR_COEF[k] * ortho_sat32((ortho_acc_t)mid[-o] - mid[o]);
      }
      s->work_q[j] = (ortho_word_t)ortho_sat32(acc >> ORTHO_F);
      s->work_i[j] = mid[0];
#endif
    }
  }
}
#endif

/* ---- trim stage: gain/phase (sideband folded in), optional skew, DC ---- */
static void ortho_trim(ortho_t *s, ortho_sample_t *out_i, ortho_sample_t *out_q, int n) {
  int j;
  const ortho_coef_t a = s->coef_a, b = s->trims.gain_sin;
  const ortho_sample_t dci = s->trims.dc_i, dcq = s->trims.dc_q;
#if ORTHO_MAX_SKEW > 0
  const int L = 2 * ORTHO_MAX_SKEW + 4;
  const int k0 = s->trims.skew_whole - 1;
  const ortho_coef_t h0 = s->trims.skew_taps[0], h1 = s->trims.skew_taps[1];
  const ortho_coef_t h2 = s->trims.skew_taps[2], h3 = s->trims.skew_taps[3];
#endif
  for (j = 0; j < n; j++) {
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
    const float iv = s->work_i[j], qv = s->work_q[j];
    float vi = iv;
    float vq = a * qv + b * iv;
#else
    const ortho_acc_t iv = s->work_i[j], qv = s->work_q[j];
#if ORTHO_ARITH == ORTHO_ARITH_Q15
    ortho_acc_t vi = ortho_sat_io((iv + ORTHO_ONE(15 - ORTHO_HEADROOM_BITS)) >> (16 - ORTHO_HEADROOM_BITS));
#else
    ortho_acc_t vi = ortho_sat_io(iv * ORTHO_ONE(ORTHO_HEADROOM_BITS));
#endif
    ortho_acc_t vq = ortho_sat_io(((ortho_acc_t)a * qv + (ortho_acc_t)b * iv + ORTHO_ONE(29 - ORTHO_HEADROOM_BITS)) >>
                                  (30 - ORTHO_HEADROOM_BITS));
#endif
#if ORTHO_MAX_SKEW > 0
    {
      const ortho_sample_t *si, *sq;
      s->skew_i[s->skew_pos] = (ortho_sample_t)vi;
      s->skew_i[s->skew_pos + L] = (ortho_sample_t)vi;
      s->skew_q[s->skew_pos] = (ortho_sample_t)vq;
      s->skew_q[s->skew_pos + L] = (ortho_sample_t)vq;
      si = s->skew_i + s->skew_pos + 1;                 /* si[L-1-m] = I'[n-m] */
      sq = s->skew_q + s->skew_pos + 1 + (L - 1 - k0); /* sq[-j] = Q'[n-k0-j] */
      if (++s->skew_pos == L) s->skew_pos = 0;
      vi = si[L - 1 - (ORTHO_MAX_SKEW + 1)];
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
      vq = h0 * sq[0] + h1 * sq[-1] + h2 * sq[-2] + h3 * sq[-3];
#else
      vq = ortho_sat_io(((ortho_acc_t)h0 * sq[0] + (ortho_acc_t)h1 * sq[-1] + (ortho_acc_t)h2 * sq[-2] +
                         (ortho_acc_t)h3 * sq[-3] + ORTHO_ONE(ORTHO_TF - 1)) >>
                        ORTHO_TF);
#endif
    }
#endif
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
    out_i[j] = vi + dci;
    out_q[j] = vq + dcq;
#else
    out_i[j] = (ortho_sample_t)ortho_sat_io(vi + dci);
    out_q[j] = (ortho_sample_t)ortho_sat_io(vq + dcq);
#endif
  }
}

void ortho_process(ortho_t *s, const ortho_sample_t *in, ortho_sample_t *out_i, ortho_sample_t *out_q,
                   size_t n) {
  size_t o = 0;
  while (o < n) {
    const int m = (int)(n - o < ORTHO_CHUNK ? n - o : ORTHO_CHUNK);
    ortho_network(s, in + o, m);
    ortho_trim(s, out_i + o, out_q + o, m);
    o += (size_t)m;
  }
}
