/*
 * orthotone firmware kit: the arithmetic of one all-pass section step, shared by the kernel
 * (ortho_kit.c) and the generated section passes (ortho_sections.c). Internal to the kit.
 * The rules are stated in ortho_kit.h.
 */
#ifndef ORTHO_ARITH_H
#define ORTHO_ARITH_H

#include "ortho_kit.h"

#if ORTHO_ARITH != ORTHO_ARITH_FLOAT
static inline ortho_acc_t ortho_sat32(ortho_acc_t v) {
  return v > 2147483647L ? (ortho_acc_t)2147483647L : v < -2147483647L - 1 ? (ortho_acc_t)(-2147483647L - 1) : v;
}
/* y = sat32(xm + trunc0(a * sat32(x - ym) / 2^F)): one all-pass section, m = 1 or 2 (xm = x[n-m],
 * ym = y[n-m]); magnitude truncation of the product. */
#define ORTHO_AP_STEP(a, x, xm, ym, y)                                                             \
  do {                                                                                             \
    const ortho_acc_t p_ = (ortho_acc_t)(a) * ortho_sat32((ortho_acc_t)(x) - (ym));                \
    const ortho_acc_t r_ = p_ >= 0 ? p_ >> (ORTHO_COEF_BITS - 1) : -((-p_) >> (ORTHO_COEF_BITS - 1)); \
    (y) = (ortho_word_t)ortho_sat32((ortho_acc_t)(xm) + r_);                                       \
  } while (0)
#else
/* y = a*(x - ym) + xm in single precision. */
#define ORTHO_AP_STEP(a, x, xm, ym, y) ((y) = (a) * ((x) - (ym)) + (xm))
#endif

/* Runs all sections of both branches over n samples in place (generated per network in
 * ortho_sections.c: sections grouped into passes that keep their states in locals). */
void ortho_run_sections(ortho_word_t *bi, ortho_word_t *bq, int n, ortho_word_t *si, ortho_word_t *sq);

#endif /* ORTHO_ARITH_H */
