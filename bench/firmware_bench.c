/*
 * Throughput of the firmware kit's ortho_process against a plain per-sample cascade of the same
 * sections in the same arithmetic (same tables, same rounding, same trim stage), built with the
 * same flags. Prints one JSON object. Used by bench/firmware.bench.mjs (the kit comes from
 * 'orthotone firmware'; all-pass kits only).
 */
#define _POSIX_C_SOURCE 199309L
#include <stdio.h>
#include <time.h>

#include "ortho_kit.h"

#define BLOCK 128
#define BLOCKS 4096
#define REPEATS 7

static double now_ns(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec * 1e9 + (double)t.tv_nsec;
}

#if ORTHO_ARITH != ORTHO_ARITH_FLOAT
static ortho_acc_t sat32(ortho_acc_t v) {
  return v > 2147483647L ? (ortho_acc_t)2147483647L : v < -2147483647L - 1 ? (ortho_acc_t)(-2147483647L - 1) : v;
}
static ortho_acc_t sat_io(ortho_acc_t v) { return v > ORTHO_SMAX ? ORTHO_SMAX : v < ORTHO_SMIN ? ORTHO_SMIN : v; }
#endif

/* The plain cascade: per sample, every section in turn, states in arrays. */
typedef struct {
  ortho_word_t si[4 * ORTHO_ATLEAST1(ORTHO_SECTIONS_I)], sq[4 * ORTHO_ATLEAST1(ORTHO_SECTIONS_Q)];
} plain_t;

static ortho_word_t plain_section(ortho_word_t x, ortho_coef_t a, int order, ortho_word_t *st) {
  ortho_word_t xm = order == 1 ? st[0] : st[1], ym = order == 1 ? st[2] : st[3], y;
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
  y = a * (x - ym) + xm;
#else
  {
    const ortho_acc_t p = (ortho_acc_t)a * sat32((ortho_acc_t)x - ym);
    const ortho_acc_t r = p >= 0 ? p >> (ORTHO_COEF_BITS - 1) : -((-p) >> (ORTHO_COEF_BITS - 1));
    y = (ortho_word_t)sat32((ortho_acc_t)xm + r);
  }
#endif
  st[1] = st[0];
  st[0] = x;
  st[3] = st[2];
  st[2] = y;
  return y;
}

static void plain_process(plain_t *p, const ortho_sample_t *in, ortho_sample_t *oi, ortho_sample_t *oq, int n,
                          ortho_coef_t ga, ortho_coef_t gb) {
  int j, k;
  for (j = 0; j < n; j++) {
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
    ortho_word_t vi = in[j], vq = in[j];
#elif ORTHO_ARITH == ORTHO_ARITH_Q15
    ortho_word_t vi = (ortho_word_t)((ortho_acc_t)in[j] * ((ortho_acc_t)1 << (16 - ORTHO_HEADROOM_BITS))), vq = vi;
#else
    ortho_word_t vi = (ortho_word_t)(((ortho_acc_t)in[j] + ((ortho_acc_t)1 << ORTHO_HEADROOM_BITS >> 1)) >> ORTHO_HEADROOM_BITS), vq = vi;
#endif
    for (k = 0; k < ORTHO_SECTIONS_I; k++) vi = plain_section(vi, ORTHO_COEF_I[k], ORTHO_ORDER_I[k], p->si + 4 * k);
    for (k = 0; k < ORTHO_SECTIONS_Q; k++) vq = plain_section(vq, ORTHO_COEF_Q[k], ORTHO_ORDER_Q[k], p->sq + 4 * k);
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
    oi[j] = vi;
    oq[j] = ga * vq + gb * vi;
#elif ORTHO_ARITH == ORTHO_ARITH_Q15
    oi[j] = (ortho_sample_t)sat_io(((ortho_acc_t)vi + ((ortho_acc_t)1 << (15 - ORTHO_HEADROOM_BITS))) >> (16 - ORTHO_HEADROOM_BITS));
    oq[j] = (ortho_sample_t)sat_io(((ortho_acc_t)ga * vq + (ortho_acc_t)gb * vi + ((ortho_acc_t)1 << (29 - ORTHO_HEADROOM_BITS))) >> (30 - ORTHO_HEADROOM_BITS));
#else
    oi[j] = (ortho_sample_t)sat_io((ortho_acc_t)vi * ((ortho_acc_t)1 << ORTHO_HEADROOM_BITS));
    oq[j] = (ortho_sample_t)sat_io(((ortho_acc_t)ga * vq + (ortho_acc_t)gb * vi + ((ortho_acc_t)1 << (29 - ORTHO_HEADROOM_BITS))) >> (30 - ORTHO_HEADROOM_BITS));
#endif
  }
}

static ortho_sample_t in[BLOCK], oi[BLOCK], oq[BLOCK];
static ortho_t kit;
static plain_t plain;
static volatile double sink;

int main(void) {
  int r, b, j, mismatches = 0;
  double best_kit = 1e300, best_plain = 1e300, s = 0;
  unsigned long lcg = 12345;
  ortho_trims_t t;
  ortho_init(&kit);
  ortho_trims_neutral(&t);
  for (j = 0; j < BLOCK; j++) {
    lcg = lcg * 6364136223846793005UL + 1442695040888963407UL;
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
    in[j] = (float)((double)(lcg >> 33) / 2147483648.0 - 0.5);
#else
    in[j] = (ortho_sample_t)((long)(lcg >> 40) - (1L << 23)) ;
#if ORTHO_ARITH == ORTHO_ARITH_Q15
    in[j] = (ortho_sample_t)(in[j] >> 10);
#endif
#endif
  }
  for (r = 0; r < REPEATS; r++) {
    double t0 = now_ns(), t1, t2;
    for (b = 0; b < BLOCKS; b++) {
      ortho_process(&kit, in, oi, oq, BLOCK);
      s += (double)oq[b & (BLOCK - 1)];
    }
    t1 = now_ns();
    for (b = 0; b < BLOCKS; b++) {
      plain_process(&plain, in, oi, oq, BLOCK, t.gain_cos, t.gain_sin);
      s += (double)oq[b & (BLOCK - 1)];
    }
    t2 = now_ns();
    if (t1 - t0 < best_kit) best_kit = t1 - t0;
    if (t2 - t1 < best_plain) best_plain = t2 - t1;
  }
  /* Same output from both (the same arithmetic), checked on a fresh pair. */
  {
    static ortho_sample_t ki[BLOCK], kq[BLOCK];
    static plain_t p2;
    ortho_init(&kit);
    for (b = 0; b < 64; b++) {
      ortho_process(&kit, in, ki, kq, BLOCK);
      plain_process(&p2, in, oi, oq, BLOCK, t.gain_cos, t.gain_sin);
      for (j = 0; j < BLOCK; j++) mismatches += (ki[j] != oi[j]) + (kq[j] != oq[j]);
    }
  }
  sink = s;
  printf("{\"kitNsPerSample\": %.4f, \"plainNsPerSample\": %.4f, \"mismatches\": %d}\n",
         best_kit / (BLOCKS * BLOCK), best_plain / (BLOCKS * BLOCK), mismatches);
  return 0;
}
