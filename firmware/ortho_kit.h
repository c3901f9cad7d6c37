/*
 * orthotone firmware kit: the 90-degree network (all-pass pair or Hilbert FIR) and the trim stage,
 * in one arithmetic chosen when the kit is generated (float, Q31 or Q15; see ortho_config.h).
 *
 * C99, no malloc, no mutable globals, no libm in the per-sample path: all state lives in one
 * ortho_t that the caller owns. Call ortho_init once (or ortho_reset to silence the state), then
 * ortho_set_trims whenever the trims change, and ortho_process once per block.
 *
 * Arithmetic (the same description as src/design/kit-arithmetic.ts; src/generate/fixed-point.ts
 * models it bit for bit). Q15 and Q31 differ in the words at the edges, not inside:
 *   - input/output samples: B-bit words, Q(B-1), full scale +-1 (B = 16 for q15, 32 for q31);
 *   - coefficients: C-bit words, F = C - 1 fractional bits (C = 16 for q15, 32 for q31); trims
 *     and skew taps in Q(C-2), range +-2, for gains up to +6 dB;
 *   - network signals and states: 32-bit words in Q(31-H); H = ORTHO_HEADROOM_BITS is chosen by
 *     the generator from the largest L1 norm of the impulse response to any node, so no node can
 *     overflow for an input within full scale; products and sums in 64-bit accumulators;
 *   - all-pass section (m = 1 or 2): d = sat32(x[n] - y[n-m]), p = a * d (64 bit),
 *     y[n] = sat32(x[n-m] + trunc0(p / 2^F)); trunc0 rounds toward zero (magnitude truncation),
 *     so no section sustains a zero-input limit cycle (Jackson, BSTJ 48:3021, 1969);
 *   - FIR: Q = sat32((sum_k g_k * sat32(x[n-c-k] - x[n-c+k]) + 2^(F-1)) >> F), I = x[n-c];
 *   - to the network: q15 x * 2^(16-H) (exact); q31 (x + 2^(H-1)) >> H (round half up);
 *   - trims: Q' = sat_B((A*Q + B*I + 2^(29-H)) >> (30-H)) with A = s*G*cos(phi), B = G*sin(phi);
 *     I' = q15: sat16((I + 2^(15-H)) >> (16-H)); q31: sat32(I * 2^H);
 *     optional skew: Q'' = sat_B((sum_j h_j * Q'[n-k+1-j] + 2^(C-3)) >> (C-2)), 4-tap Lagrange,
 *     I'' = I' delayed by ORTHO_MAX_SKEW + 1 samples; DC added last: out = sat_B(v + dc),
 *     dc in output counts;
 *   - every rounding not named above is round half up: (v + 2^(s-1)) >> s, arithmetic shift.
 * Float kits use the same structure in single precision (no rounding steps, no saturation), with
 * 1e-20 added at each all-pass branch input and removed at its output against subnormal numbers.
 * Right shifts of negative values are arithmetic (checked at compile time below).
 */
#ifndef ORTHO_KIT_H
#define ORTHO_KIT_H

#include <stddef.h>
#include <stdint.h>

#define ORTHO_ARITH_FLOAT 0
#define ORTHO_ARITH_Q31 1
#define ORTHO_ARITH_Q15 2
#define ORTHO_KIND_ALLPASS 0
#define ORTHO_KIND_FIR 1

#include "ortho_config.h" /* generated: arithmetic, network kind, sizes, headroom, table names */

#if ORTHO_ARITH == ORTHO_ARITH_Q15
typedef int16_t ortho_sample_t; /* input/output sample, Q15 */
typedef int16_t ortho_coef_t;   /* coefficient, Q15 (trims and skew taps Q14) */
typedef int32_t ortho_word_t;   /* network signal and state, Q(31-H) */
typedef int64_t ortho_acc_t;    /* products and sums */
#define ORTHO_IO_BITS 16
#define ORTHO_COEF_BITS 16
#define ORTHO_SMAX 32767L
#define ORTHO_SMIN (-32767L - 1)
#elif ORTHO_ARITH == ORTHO_ARITH_Q31
typedef int32_t ortho_sample_t; /* input/output sample, Q31 */
typedef int32_t ortho_coef_t;   /* coefficient, Q31 (trims and skew taps Q30) */
typedef int32_t ortho_word_t;   /* network signal and state, Q(31-H) */
typedef int64_t ortho_acc_t;
#define ORTHO_IO_BITS 32
#define ORTHO_COEF_BITS 32
#define ORTHO_SMAX 2147483647L
#define ORTHO_SMIN (-2147483647L - 1)
#elif ORTHO_ARITH == ORTHO_ARITH_FLOAT
typedef float ortho_sample_t; /* input/output sample, full scale +-1 */
typedef float ortho_coef_t;
typedef float ortho_word_t;
typedef float ortho_acc_t;
#else
#error "ORTHO_ARITH must be ORTHO_ARITH_FLOAT, ORTHO_ARITH_Q31 or ORTHO_ARITH_Q15"
#endif

#ifndef ORTHO_MAX_SKEW
#define ORTHO_MAX_SKEW 0 /* largest |skew| in whole samples; 0 leaves the skew stage out */
#endif

/* Samples the block loop works on at a time (internal work arrays in ortho_t). */
#define ORTHO_CHUNK 64

/* Sizes of arrays that must not be empty in C99. */
#define ORTHO_ATLEAST1(n) ((n) > 0 ? (n) : 1)

/* Coefficient tables (ortho_coeffs.c, generated; names from ortho_config.h). */
#if ORTHO_KIND == ORTHO_KIND_ALLPASS
extern const ortho_coef_t ORTHO_COEF_I[ORTHO_ATLEAST1(ORTHO_SECTIONS_I)];   /* Q(C-1) (float: values) */
extern const unsigned char ORTHO_ORDER_I[ORTHO_ATLEAST1(ORTHO_SECTIONS_I)]; /* 1 or 2 (z^-1 or z^-2) */
extern const ortho_coef_t ORTHO_COEF_Q[ORTHO_ATLEAST1(ORTHO_SECTIONS_Q)];
extern const unsigned char ORTHO_ORDER_Q[ORTHO_ATLEAST1(ORTHO_SECTIONS_Q)];
#else
extern const ortho_coef_t ORTHO_FIR_COEF[ORTHO_ATLEAST1(ORTHO_FIR_PAIRS)];     /* g_k = h[c+k], Q(C-1) */
extern const unsigned short ORTHO_FIR_OFFSET[ORTHO_ATLEAST1(ORTHO_FIR_PAIRS)]; /* k, offset from centre */
#endif

/* The kit's own trim values (what a fixed-point firmware applies); make them on the host with
 * ortho_trims_from_units (ortho_host.h) or take them from the profile header. */
typedef struct {
  ortho_coef_t gain_cos;   /* G*cos(phi): Q(C-2) (q15: 16384 = 1.0); float: the value */
  ortho_coef_t gain_sin;   /* G*sin(phi): same format */
  ortho_sample_t dc_i;     /* DC added to I, output counts (Q(B-1)); float: full scale */
  ortho_sample_t dc_q;     /* DC added to Q, same */
  int lower_sideband;      /* 0: upper sideband; 1: lower (Q negated before the trims) */
  int skew_whole;          /* skew stage: whole part k of ORTHO_MAX_SKEW + 1 + skew, 1..2*ORTHO_MAX_SKEW+1 */
  ortho_coef_t skew_taps[4]; /* Lagrange taps for the fraction, Q(C-2) (float: values) */
} ortho_trims_t;

#ifndef ORTHO_HAS_PROFILE
#define ORTHO_HAS_PROFILE 0
#endif
#if ORTHO_HAS_PROFILE
extern const ortho_trims_t ORTHO_PROFILE_TRIMS; /* start-up trims from a calibration profile */
#endif

/* All state of one generator: network state, trims, work arrays. Caller-owned, no pointers inside. */
typedef struct {
#if ORTHO_KIND == ORTHO_KIND_ALLPASS
  ortho_word_t st_i[4 * ORTHO_ATLEAST1(ORTHO_SECTIONS_I)]; /* per section x[n-1], x[n-2], y[n-1], y[n-2] */
  ortho_word_t st_q[4 * ORTHO_ATLEAST1(ORTHO_SECTIONS_Q)];
  ortho_word_t line_i[ORTHO_ATLEAST1(ORTHO_DELAY_I)]; /* branch delays, circular */
  ortho_word_t line_q[ORTHO_ATLEAST1(ORTHO_DELAY_Q)];
  int pos_i, pos_q;
#else
  ortho_word_t hist[2 * ORTHO_FIR_TAPS]; /* doubled circular history: reads are one contiguous span */
  int pos;
#endif
#if ORTHO_MAX_SKEW > 0
  ortho_sample_t skew_i[2 * (2 * ORTHO_MAX_SKEW + 4)]; /* doubled circular lines of I' and Q' */
  ortho_sample_t skew_q[2 * (2 * ORTHO_MAX_SKEW + 4)];
  int skew_pos;
#endif
  ortho_trims_t trims;    /* as given */
  ortho_coef_t coef_a;    /* +-gain_cos with the sideband sign folded in */
  ortho_word_t work_i[ORTHO_CHUNK];
  ortho_word_t work_q[ORTHO_CHUNK];
} ortho_t;

/* Clears every state and sets the start-up trims: the profile's (ORTHO_HAS_PROFILE) or neutral
 * (G = 1, phi = 0, no DC, no skew, upper sideband). */
void ortho_init(ortho_t *s);
/* Clears the signal state to silence; keeps the trims. */
void ortho_reset(ortho_t *s);
/* Neutral trims in the kit's format. */
void ortho_trims_neutral(ortho_trims_t *t);
/* Applies trims (the kit's own values) from the next sample on; no libm, no rounding here. */
void ortho_set_trims(ortho_t *s, const ortho_trims_t *t);
/* Runs n input samples into I and Q (any n; in may not alias out_i or out_q). */
void ortho_process(ortho_t *s, const ortho_sample_t *in, ortho_sample_t *out_i, ortho_sample_t *out_q,
                   size_t n);

#endif /* ORTHO_KIT_H */
