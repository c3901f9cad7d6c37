/*
 * orthotone virtual device: the firmware's protocol parser (protocol.c) and an I/Q kernel running
 * on the host, serving the device link on a pseudo-terminal (or on a given tty).
 *
 *   virtual-device [--state-file F] [--link PATH] [--tty DEV] [--iq FILE] [--nvm FILE]
 *                  [--input FILE] [--garbage-every N] [--rate HZ]
 *
 * The first line on stdout is the path of the device end of the pseudo-terminal (or the tty).
 * --state-file F  after every change, the trims actually applied (converted back from the
 *                 internal values) as {"gainDb":…,"phaseDeg":…,"dcI":…,"dcQ":…}, written to a
 *                 temporary file and renamed over F.
 * --link PATH     a symbolic link to the device end, replaced atomically (a stable name across
 *                 restarts, like a udev rule gives a USB adapter).
 * --iq FILE       the I/Q output, interleaved float32 little-endian (I, Q), paced in real time; a
 *                 FIFO is opened when a reader appears and samples are dropped while none reads.
 * --nvm FILE      the non-volatile memory `store` writes and a reset loads.
 * --input FILE    the external input (`source input`): float32 mono, looped; silence without it.
 * --garbage-every N  a line of noise before every Nth answer (fault tests).
 * Signals: SIGUSR1 resets the device (state from --nvm, fresh greeting); SIGTERM/SIGINT end it.
 *
 * Trims are held as the firmware holds them: A = G·cos φ and B = G·sin φ in Q(C-2) (q15: 16384
 * = 1.0, so gains up to +6 dB fit), DC in output counts; Q' = A·Q + B·I, I' = I, then DC
 * (DESIGN.md §4). A new set is ramped in linearly over 20 ms.
 * Built inside a kit made by `orthotone firmware` (the Makefile then defines OTL_WITH_KIT), the
 * device runs the kit itself: its compiled-in network and trim stage (ortho_process), its trim
 * values (ortho_trims_from_units, converted back for the answers and the state file), its
 * arithmetic and sample rate. Without a kit (the repository's firmware/ folder) it holds Q15
 * trims of the same format and makes its tones with a quadrature oscillator (I = cos, Q = sin).
 * Networks loaded over the link arrive as coefficient codes in the device's arithmetic; a new one
 * runs in a spare slot and is cross-faded in over 20 ms at a block boundary.
 */
#define _XOPEN_SOURCE 600
#define _DEFAULT_SOURCE
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <poll.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <termios.h>
#include <time.h>
#include <unistd.h>

#include "protocol.h"
#ifdef OTL_WITH_KIT
#include "ortho_host.h"
#include "ortho_kit.h"
#endif

#define RATE_DEFAULT 48000u
#define BLOCK 48
#define RAMP_MS 20u
#define MAX_TAPS 127
#define MAX_SECS 12
#define MAX_DELAY 64
#define Q14 16384.0
#define Q15 32768.0
#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

/* ---- one network slot ---------------------------------------------------------------------- */

typedef struct {
  int loaded;
  otl_net_kind kind;
  uint32_t count, isec, qsec, idelay, qdelay;
  int32_t code[2 * MAX_SECS > MAX_TAPS ? 2 * MAX_SECS : MAX_TAPS];
  int order[2 * MAX_SECS];
  /* run state */
  double sx1[2 * MAX_SECS], sx2[2 * MAX_SECS], sy1[2 * MAX_SECS], sy2[2 * MAX_SECS];
  double dl_i[MAX_DELAY], dl_q[MAX_DELAY];
  double hist[MAX_TAPS];
  unsigned pos;
} slot_t;

static void slot_clear_state(slot_t *s) {
  memset(s->sx1, 0, sizeof s->sx1);
  memset(s->sx2, 0, sizeof s->sx2);
  memset(s->sy1, 0, sizeof s->sy1);
  memset(s->sy2, 0, sizeof s->sy2);
  memset(s->dl_i, 0, sizeof s->dl_i);
  memset(s->dl_q, 0, sizeof s->dl_q);
  memset(s->hist, 0, sizeof s->hist);
  s->pos = 0;
}

/* One sample through the slot's network: x in, i/q out. Sections: order m,
 * H(z) = (a + z^-m)/(1 + a z^-m): y = a·x + x[n-m] − a·y[n-m] (DESIGN.md §3). */
static void slot_run(slot_t *s, double x, double *oi, double *oq) {
  if (s->kind == OTL_NET_FIR) {
    uint32_t n = s->count, k, c = (n - 1) / 2;
    double acc = 0;
    s->hist[s->pos] = x;
    for (k = 0; k < n; k++) acc += (s->code[k] / Q15) * s->hist[(s->pos + MAX_TAPS - k) % MAX_TAPS];
    *oq = acc;
    *oi = s->hist[(s->pos + MAX_TAPS - c) % MAX_TAPS];
    s->pos = (s->pos + 1) % MAX_TAPS;
    return;
  }
  {
    double v[2];
    uint32_t b, k, base = 0;
    for (b = 0; b < 2; b++) {
      uint32_t ns = b == 0 ? s->isec : s->qsec, d = b == 0 ? s->idelay : s->qdelay;
      double *dl = b == 0 ? s->dl_i : s->dl_q, y = x;
      for (k = 0; k < ns; k++) {
        uint32_t j = base + k;
        double a = s->code[j] / Q15, in = y, out;
        if (s->order[j] == 2) {
          out = a * in + s->sx2[j] - a * s->sy2[j];
          s->sx2[j] = s->sx1[j];
          s->sx1[j] = in;
          s->sy2[j] = s->sy1[j];
          s->sy1[j] = out;
        } else {
          out = a * in + s->sx1[j] - a * s->sy1[j];
          s->sx1[j] = in;
          s->sy1[j] = out;
        }
        y = out;
      }
      if (d > 0) {
        double o = dl[(s->pos + MAX_DELAY - d) % MAX_DELAY];
        dl[s->pos] = y;
        y = o;
      }
      v[b] = y;
      base += ns;
    }
    s->pos = (s->pos + 1) % MAX_DELAY;
    *oi = v[0];
    *oq = v[1];
  }
}

/* ---- the device ---------------------------------------------------------------------------- */

typedef struct {
  double a, b, dci, dcq; /* trims as held: integer codes in Q(C-2), Q(C-2), Q(IO-1) (float: values) */
} trim_codes;

/* Scale of the held trims (codes per unit) and the arithmetic, from the kit when there is one. */
#ifdef OTL_WITH_KIT
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
static const double COEF_SCALE = 1, DC_SCALE = 1, RES_COEF = 1.0 / 8388608, RES_DC = 1.0 / 16777216;
static const char *const ARITH = "float32";
#else
static const double COEF_SCALE = (double)(1L << (ORTHO_COEF_BITS - 3)) * 2.0;
static const double DC_SCALE = (double)(1L << (ORTHO_IO_BITS - 2)) * 2.0;
static const double RES_COEF = 1.0 / ((double)(1L << (ORTHO_COEF_BITS - 3)) * 2.0);
static const double RES_DC = 1.0 / ((double)(1L << (ORTHO_IO_BITS - 2)) * 2.0);
static const char *const ARITH = ORTHO_ARITH == ORTHO_ARITH_Q15 ? "q15" : "q31";
#endif
#else
static const double COEF_SCALE = Q14, DC_SCALE = Q15, RES_COEF = 1.0 / Q14, RES_DC = 1.0 / Q15;
static const char *const ARITH = "q15";
#endif
#ifdef OTL_WITH_KIT
static ortho_t KIT; /* the kit's generator: compiled-in network and trim stage */
#endif

typedef struct {
  uint32_t rate;
  int fd;                  /* device end we serve (pty master or tty) */
  trim_codes trims;        /* target */
  double cur[4], step[4];  /* ramped a, b, dci, dcq (full-scale units) */
  uint32_t ramp_left;
  int lower;
  otl_source src;
  slot_t slots[2];
  int active;              /* index of the running slot, or -1 (oscillator) */
  int fading_from;         /* slot fading out, or -1 (-2: the oscillator) */
  uint32_t fade_pos, fade_len;
  int staging;             /* slot being loaded, or -1 */
  double ph1, ph2;         /* source phases, cycles */
  const char *state_file, *nvm_file, *iq_path, *input_path;
  int iq_fd;
  FILE *input;
  unsigned garbage_every, answers;
} device_t;

static device_t D;
static otl_parser P;
static volatile sig_atomic_t want_reset, want_exit;

static void on_signal(int sig) {
  if (sig == SIGUSR1) want_reset = 1;
  else want_exit = 1;
}

static void write_all(int fd, const char *p, size_t n) {
  while (n > 0) {
    ssize_t w = write(fd, p, n);
    if (w < 0) {
      if (errno == EINTR) continue;
      return; /* nobody reading (EAGAIN) or gone: a UART drops bytes too */
    }
    p += w;
    n -= (size_t)w;
  }
}

static void dev_write(void *ctx, const char *bytes, size_t n) {
  device_t *d = ctx;
  if (d->garbage_every && ++d->answers % d->garbage_every == 0) {
    static const char noise[] = "\x13\x7f~#noise \xfe\xff on the line\r\n";
    write_all(d->fd, noise, sizeof noise - 1);
  }
  write_all(d->fd, bytes, n);
}

static void dev_info(void *ctx, otl_info *in) {
  device_t *d = ctx;
  in->rate_hz = d->rate;
  in->arith = ARITH;
  in->gain_res_db = 20.0 * log10(1.0 + RES_COEF);
  in->phase_res_deg = RES_COEF * 180.0 / M_PI;
  in->dc_res = RES_DC;
  in->gain_max_db = 6;
  in->phase_max_deg = 45;
  in->dc_max = 1;
  in->ramp_ms = RAMP_MS;
  in->max_taps = MAX_TAPS;
  in->max_sections = MAX_SECS;
  in->name = "orthotone-virtual";
}

#ifndef OTL_WITH_KIT
static double sat16(double x) {
  double r = floor(x + 0.5);
  if (r > 32767) r = 32767;
  if (r < -32767) r = -32767;
  return r;
}
#endif

/* Internal values back to the protocol's units. */
static void codes_to_trims(const trim_codes *c, otl_trims *t) {
  double a = c->a / COEF_SCALE, b = c->b / COEF_SCALE, g = sqrt(a * a + b * b);
  t->gain_db = g > 0 ? 20.0 * log10(g) : -99;
  t->phase_deg = atan2(b, a) * 180.0 / M_PI;
  t->dc_i = c->dci / DC_SCALE;
  t->dc_q = c->dcq / DC_SCALE;
}

static void write_state(device_t *d) {
  char tmp[4096], buf[256], num[4][40];
  otl_trims t;
  int n, fd;
  if (!d->state_file) return;
  codes_to_trims(&d->trims, &t);
  otl_format_decimal(num[0], sizeof num[0], t.gain_db, 9);
  otl_format_decimal(num[1], sizeof num[1], t.phase_deg, 9);
  otl_format_decimal(num[2], sizeof num[2], t.dc_i, 9);
  otl_format_decimal(num[3], sizeof num[3], t.dc_q, 9);
  n = snprintf(buf, sizeof buf, "{\"gainDb\":%s,\"phaseDeg\":%s,\"dcI\":%s,\"dcQ\":%s}\n", num[0], num[1],
               num[2], num[3]);
  snprintf(tmp, sizeof tmp, "%s.%ld.tmp", d->state_file, (long)getpid());
  fd = open(tmp, O_WRONLY | O_CREAT | O_TRUNC, 0644);
  if (fd < 0) return;
  write_all(fd, buf, (size_t)n);
  close(fd);
  if (rename(tmp, d->state_file) != 0) unlink(tmp);
}

static void start_ramp(device_t *d) {
  double target[4];
  uint32_t len = d->rate * RAMP_MS / 1000u, k;
  target[0] = d->trims.a / COEF_SCALE;
  target[1] = d->trims.b / COEF_SCALE;
  target[2] = d->trims.dci / DC_SCALE;
  target[3] = d->trims.dcq / DC_SCALE;
  for (k = 0; k < 4; k++) d->step[k] = (target[k] - d->cur[k]) / len;
  d->ramp_left = len;
}

static otl_result dev_set_trims(void *ctx, const otl_trims *w, unsigned mask, otl_trims *applied) {
  device_t *d = ctx;
  otl_trims t;
  double g, ph;
  codes_to_trims(&d->trims, &t);
  if (mask & OTL_GAIN) t.gain_db = w->gain_db;
  if (mask & OTL_PHASE) t.phase_deg = w->phase_deg;
  if (mask & OTL_DCI) t.dc_i = w->dc_i;
  if (mask & OTL_DCQ) t.dc_q = w->dc_q;
  g = pow(10.0, t.gain_db / 20.0);
  ph = t.phase_deg * M_PI / 180.0;
  /* all four codes change together, between blocks: the set is atomic */
#ifdef OTL_WITH_KIT
  {
    ortho_trims_t kt;
    (void)g;
    (void)ph;
    if (ortho_trims_from_units(&kt, t.gain_db, t.phase_deg, 0.0, t.dc_i, t.dc_q, 0) != 0) return OTL_E_RANGE;
    d->trims.a = (double)kt.gain_cos;
    d->trims.b = (double)kt.gain_sin;
    d->trims.dci = (double)kt.dc_i;
    d->trims.dcq = (double)kt.dc_q;
  }
#else
  d->trims.a = sat16(g * cos(ph) * Q14);
  d->trims.b = sat16(g * sin(ph) * Q14);
  d->trims.dci = sat16(t.dc_i * Q15);
  d->trims.dcq = sat16(t.dc_q * Q15);
#endif
  start_ramp(d);
  codes_to_trims(&d->trims, applied);
  write_state(d);
  return OTL_OK;
}

static void dev_get_trims(void *ctx, otl_trims *out) {
  codes_to_trims(&((device_t *)ctx)->trims, out);
}

static otl_result dev_set_sideband(void *ctx, int lower) {
  ((device_t *)ctx)->lower = lower;
  return OTL_OK;
}

static otl_result dev_set_source(void *ctx, const otl_source *s) {
  ((device_t *)ctx)->src = *s;
  return OTL_OK;
}

static otl_result dev_net_begin(void *ctx, const otl_net_shape *sh) {
  device_t *d = ctx;
  slot_t *s;
  uint32_t k;
  if (sh->kind == OTL_NET_FIR && (sh->count > MAX_TAPS || sh->count % 2 == 0)) return OTL_E_RANGE;
  if (sh->kind == OTL_NET_ALLPASS && (sh->i_sections > MAX_SECS || sh->q_sections > MAX_SECS ||
                                      sh->i_delay >= MAX_DELAY || sh->q_delay >= MAX_DELAY))
    return OTL_E_RANGE;
  if (d->fading_from >= 0) return OTL_E_STATE; /* a switch is still fading */
  d->staging = d->active == 0 ? 1 : 0;
  s = &d->slots[d->staging];
  memset(s, 0, sizeof *s);
  s->kind = sh->kind;
  s->count = sh->count;
  s->isec = sh->i_sections;
  s->qsec = sh->q_sections;
  s->idelay = sh->i_delay;
  s->qdelay = sh->q_delay;
  for (k = 0; k < 2 * MAX_SECS; k++) s->order[k] = 1;
  return OTL_OK;
}

static otl_result dev_net_put(void *ctx, uint32_t i, int32_t code) {
  device_t *d = ctx;
  if (d->staging < 0 || i >= d->slots[d->staging].count) return OTL_E_STATE;
  d->slots[d->staging].code[i] = code;
  return OTL_OK;
}

static otl_result dev_net_order(void *ctx, uint32_t i, int order) {
  device_t *d = ctx;
  if (d->staging < 0 || i >= 2 * MAX_SECS) return OTL_E_STATE;
  d->slots[d->staging].order[i] = order;
  return OTL_OK;
}

static otl_result dev_net_commit(void *ctx) {
  device_t *d = ctx;
  if (d->staging < 0) return OTL_E_STATE;
  slot_clear_state(&d->slots[d->staging]);
  d->slots[d->staging].loaded = 1;
  d->fading_from = d->active >= 0 ? d->active : -2;
  d->active = d->staging;
  d->staging = -1;
  d->fade_len = d->rate * RAMP_MS / 1000u;
  d->fade_pos = 0;
  return OTL_OK;
}

static void dev_net_abort(void *ctx) {
  ((device_t *)ctx)->staging = -1;
}

/* ---- non-volatile memory: one record, written atomically ---------------------------------- */

typedef struct {
  char magic[4];
  trim_codes trims;
  int32_t lower;
  otl_source src;
  int32_t has_net;
  slot_t net;
} nvm_record;

static otl_result dev_store(void *ctx) {
  device_t *d = ctx;
  nvm_record r;
  char tmp[4096];
  int fd;
  if (!d->nvm_file) return OTL_E_STORE;
  memset(&r, 0, sizeof r);
  memcpy(r.magic, "OTL1", 4);
  r.trims = d->trims;
  r.lower = d->lower;
  r.src = d->src;
  r.has_net = d->active >= 0;
  if (r.has_net) r.net = d->slots[d->active];
  snprintf(tmp, sizeof tmp, "%s.%ld.tmp", d->nvm_file, (long)getpid());
  fd = open(tmp, O_WRONLY | O_CREAT | O_TRUNC, 0644);
  if (fd < 0) return OTL_E_STORE;
  if (write(fd, &r, sizeof r) != (ssize_t)sizeof r || fsync(fd) != 0) {
    close(fd);
    unlink(tmp);
    return OTL_E_STORE;
  }
  close(fd);
  if (rename(tmp, d->nvm_file) != 0) {
    unlink(tmp);
    return OTL_E_STORE;
  }
  return OTL_OK;
}

/* Power-on state: defaults, then whatever non-volatile memory holds. */
static void power_on(device_t *d) {
  nvm_record r;
  FILE *f;
  memset(&d->trims, 0, sizeof d->trims);
  d->trims.a = COEF_SCALE;
  d->lower = 0;
  d->src.kind = OTL_SRC_TONE;
  d->src.f1_hz = 1000;
  d->src.f2_hz = 0;
  d->src.amplitude = 0.5;
  d->active = -1;
  d->fading_from = -1;
  d->staging = -1;
  d->ph1 = d->ph2 = 0;
  if (d->nvm_file && (f = fopen(d->nvm_file, "rb")) != NULL) {
    if (fread(&r, sizeof r, 1, f) == 1 && memcmp(r.magic, "OTL1", 4) == 0) {
      d->trims = r.trims;
      d->lower = r.lower != 0;
      d->src = r.src;
      if (r.has_net) {
        d->slots[0] = r.net;
        slot_clear_state(&d->slots[0]);
        d->active = 0;
      }
    }
    fclose(f);
  }
  d->cur[0] = d->trims.a / COEF_SCALE;
  d->cur[1] = d->trims.b / COEF_SCALE;
  d->cur[2] = d->trims.dci / DC_SCALE;
  d->cur[3] = d->trims.dcq / DC_SCALE;
  d->ramp_left = 0;
#ifdef OTL_WITH_KIT
  ortho_init(&KIT);
#endif
  write_state(d);
}

/* ---- audio ---------------------------------------------------------------------------------- */

static double next_input(device_t *d, double *osc_q) {
  double x = 0, q = 0;
  if (d->src.kind == OTL_SRC_INPUT) {
    float v;
    if (d->input) {
      if (fread(&v, sizeof v, 1, d->input) != 1) {
        rewind(d->input);
        if (fread(&v, sizeof v, 1, d->input) != 1) v = 0;
      }
      x = v;
    }
  } else {
    x = d->src.amplitude * cos(2 * M_PI * d->ph1);
    q = d->src.amplitude * sin(2 * M_PI * d->ph1);
    d->ph1 += d->src.f1_hz / d->rate;
    d->ph1 -= floor(d->ph1);
    if (d->src.kind == OTL_SRC_TWO) {
      x += d->src.amplitude * cos(2 * M_PI * d->ph2);
      q += d->src.amplitude * sin(2 * M_PI * d->ph2);
      d->ph2 += d->src.f2_hz / d->rate;
      d->ph2 -= floor(d->ph2);
    }
  }
  *osc_q = q;
  return x;
}

#ifdef OTL_WITH_KIT
/* The kit's own path for one block: its compiled-in network and trim stage, with the ramped trims
 * rounded to the kit's values once per block (the kit applies them from the next sample). */
static void kit_block(device_t *d, const double *x, double *bi, double *bq, int n) {
  ortho_sample_t in[BLOCK], oi[BLOCK], oq[BLOCK];
  ortho_trims_t kt;
  int k;
  ortho_trims_neutral(&kt);
#if ORTHO_ARITH == ORTHO_ARITH_FLOAT
  kt.gain_cos = (float)d->cur[0];
  kt.gain_sin = (float)d->cur[1];
  kt.dc_i = (float)d->cur[2];
  kt.dc_q = (float)d->cur[3];
#else
  kt.gain_cos = (ortho_coef_t)floor(d->cur[0] * COEF_SCALE + 0.5);
  kt.gain_sin = (ortho_coef_t)floor(d->cur[1] * COEF_SCALE + 0.5);
  kt.dc_i = (ortho_sample_t)floor(d->cur[2] * DC_SCALE + 0.5);
  kt.dc_q = (ortho_sample_t)floor(d->cur[3] * DC_SCALE + 0.5);
#endif
  kt.lower_sideband = d->lower;
  ortho_set_trims(&KIT, &kt);
  for (k = 0; k < n; k++) in[k] = ortho_sample_from_full_scale(x[k]);
  ortho_process(&KIT, in, oi, oq, (size_t)n);
  for (k = 0; k < n; k++) {
    bi[k] = ortho_sample_to_full_scale(oi[k]);
    bq[k] = ortho_sample_to_full_scale(oq[k]);
  }
}
#endif

static void ramp_step(device_t *d) {
  int j;
  if (d->ramp_left == 0) return;
  for (j = 0; j < 4; j++) d->cur[j] += d->step[j];
  if (--d->ramp_left == 0) {
    d->cur[0] = d->trims.a / COEF_SCALE;
    d->cur[1] = d->trims.b / COEF_SCALE;
    d->cur[2] = d->trims.dci / DC_SCALE;
    d->cur[3] = d->trims.dcq / DC_SCALE;
  }
}

/* Sideband and trims on a slot's (or the oscillator's) output. */
static void trim(const device_t *d, double i, double q, double *oi, double *oq) {
  if (d->lower) q = -q;
  *oi = i + d->cur[2];
  *oq = d->cur[0] * q + d->cur[1] * i + d->cur[3];
}

static void run_block(device_t *d, float *out, int n) {
  double x[BLOCK], osc[BLOCK], bi[BLOCK], bq[BLOCK];
  int k, builtin_needed = d->active < 0 || d->fading_from == -2;
  for (k = 0; k < n; k++) x[k] = next_input(d, &osc[k]);
  if (builtin_needed) {
#ifdef OTL_WITH_KIT
    kit_block(d, x, bi, bq, n);
#else
    for (k = 0; k < n; k++) {
      bi[k] = x[k];
      bq[k] = osc[k];
    }
#endif
  }
  for (k = 0; k < n; k++) {
    double i, q, i2 = 0, q2 = 0, w;
    /* the built-in path: the kit trims its own output; the oscillator is trimmed here */
#ifdef OTL_WITH_KIT
    const int builtin_trimmed = 1;
#else
    const int builtin_trimmed = 0;
#endif
    if (d->active >= 0) {
      slot_run(&d->slots[d->active], x[k], &i, &q);
      trim(d, i, q, &i, &q);
    } else if (builtin_trimmed) {
      i = bi[k];
      q = bq[k];
    } else {
      trim(d, bi[k], bq[k], &i, &q);
    }
    if (d->fading_from != -1) {
      if (d->fading_from >= 0) {
        slot_run(&d->slots[d->fading_from], x[k], &i2, &q2);
        trim(d, i2, q2, &i2, &q2);
      } else if (builtin_trimmed) {
        i2 = bi[k];
        q2 = bq[k];
      } else {
        trim(d, bi[k], bq[k], &i2, &q2);
      }
      w = (double)d->fade_pos / d->fade_len;
      i = w * i + (1 - w) * i2;
      q = w * q + (1 - w) * q2;
      if (++d->fade_pos >= d->fade_len) d->fading_from = -1;
    }
    ramp_step(d);
    out[2 * k] = (float)i;
    out[2 * k + 1] = (float)q;
  }
}

static void emit_iq(device_t *d, const float *buf, int n) {
  if (!d->iq_path) return;
  if (d->iq_fd < 0) {
    d->iq_fd = open(d->iq_path, O_WRONLY | O_NONBLOCK | O_CREAT | O_APPEND, 0644);
    if (d->iq_fd < 0) return; /* a FIFO without a reader yet */
  }
  if (write(d->iq_fd, buf, sizeof(float) * 2 * (size_t)n) < 0 && errno == EPIPE) {
    close(d->iq_fd);
    d->iq_fd = -1;
  }
}

/* ---- main ----------------------------------------------------------------------------------- */

static double now_s(void) {
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return ts.tv_sec + ts.tv_nsec * 1e-9;
}

static int usage(void) {
  fputs("usage: virtual-device [--state-file F] [--link PATH] [--tty DEV] [--iq FILE] [--nvm FILE]\n"
        "                      [--input FILE] [--garbage-every N] [--rate HZ]\n",
        stderr);
  return 2;
}

int main(int argc, char **argv) {
  static const otl_device ops = {&D,           dev_write,     dev_info,         dev_set_trims,
                                 dev_get_trims, dev_set_sideband, dev_set_source, dev_net_begin,
                                 dev_net_put,   dev_net_order, dev_net_commit,   dev_net_abort,
                                 dev_store};
  const char *link_path = NULL, *tty = NULL;
  char dev_path[512];
  int hold = -1, i;
  struct termios tio;
  struct sigaction sa;
  double t0;
  uint64_t produced = 0;
  float buf[2 * BLOCK];

  memset(&D, 0, sizeof D);
  D.rate = RATE_DEFAULT;
  D.iq_fd = -1;
  for (i = 1; i < argc; i++) {
    const char *a = argv[i], *v = i + 1 < argc ? argv[i + 1] : NULL;
    if (!v) return usage();
    if (strcmp(a, "--state-file") == 0) D.state_file = v;
    else if (strcmp(a, "--link") == 0) link_path = v;
    else if (strcmp(a, "--tty") == 0) tty = v;
    else if (strcmp(a, "--iq") == 0) D.iq_path = v;
    else if (strcmp(a, "--nvm") == 0) D.nvm_file = v;
    else if (strcmp(a, "--input") == 0) D.input_path = v;
    else if (strcmp(a, "--garbage-every") == 0) D.garbage_every = (unsigned)strtoul(v, NULL, 10);
    else if (strcmp(a, "--rate") == 0) D.rate = (uint32_t)strtoul(v, NULL, 10);
    else return usage();
    i++;
  }
#ifdef OTL_WITH_KIT
  if (D.rate != RATE_DEFAULT && D.rate != ORTHO_SAMPLE_RATE_HZ) {
    fprintf(stderr, "virtual-device: this kit runs at %ld Hz (--rate cannot change it)\n", (long)ORTHO_SAMPLE_RATE_HZ);
    return 2;
  }
  D.rate = ORTHO_SAMPLE_RATE_HZ;
#endif
  if (D.rate < 8000 || D.rate > 384000) return usage();
  if (D.input_path && !(D.input = fopen(D.input_path, "rb"))) {
    fprintf(stderr, "virtual-device: cannot read --input %s: %s\n", D.input_path, strerror(errno));
    return 1;
  }

  if (tty) {
    D.fd = open(tty, O_RDWR | O_NOCTTY);
    if (D.fd < 0) {
      fprintf(stderr, "virtual-device: cannot open --tty %s: %s\n", tty, strerror(errno));
      return 1;
    }
    snprintf(dev_path, sizeof dev_path, "%s", tty);
    hold = D.fd;
  } else {
    const char *name;
    D.fd = posix_openpt(O_RDWR | O_NOCTTY);
    if (D.fd < 0 || grantpt(D.fd) != 0 || unlockpt(D.fd) != 0 || !(name = ptsname(D.fd))) {
      fprintf(stderr, "virtual-device: cannot open a pseudo-terminal: %s\n", strerror(errno));
      return 1;
    }
    snprintf(dev_path, sizeof dev_path, "%s", name);
    /* Hold the device end open ourselves: the line settings stay raw, and the master never sees
     * EIO between one host closing the port and the next opening it. */
    hold = open(dev_path, O_RDWR | O_NOCTTY);
    if (hold < 0) {
      fprintf(stderr, "virtual-device: cannot open %s: %s\n", dev_path, strerror(errno));
      return 1;
    }
  }
  if (tcgetattr(hold, &tio) == 0) {
    cfmakeraw(&tio);
    tcsetattr(hold, TCSANOW, &tio);
  }
  fcntl(D.fd, F_SETFL, fcntl(D.fd, F_GETFL) | O_NONBLOCK);

  memset(&sa, 0, sizeof sa);
  sa.sa_handler = on_signal;
  sigaction(SIGUSR1, &sa, NULL);
  sigaction(SIGTERM, &sa, NULL);
  sigaction(SIGINT, &sa, NULL);
  signal(SIGPIPE, SIG_IGN);

  if (link_path) {
    char tmp[1024];
    snprintf(tmp, sizeof tmp, "%s.%ld.tmp", link_path, (long)getpid());
    unlink(tmp);
    if (symlink(dev_path, tmp) != 0 || rename(tmp, link_path) != 0) {
      fprintf(stderr, "virtual-device: cannot make --link %s: %s\n", link_path, strerror(errno));
      return 1;
    }
  }

  otl_init(&P, &ops);
  power_on(&D);
  printf("%s\n", dev_path);
  fflush(stdout);
  otl_greet(&P);

  t0 = now_s();
  while (!want_exit) {
    struct pollfd pfd;
    uint64_t due;
    pfd.fd = D.fd;
    pfd.events = POLLIN;
    pfd.revents = 0;
    if (poll(&pfd, 1, 1) > 0 && (pfd.revents & POLLIN)) {
      uint8_t in[256];
      ssize_t n = read(D.fd, in, sizeof in);
      ssize_t k;
      for (k = 0; k < n; k++) {
        /* as a UART interrupt would: one byte at a time; lines are handled between blocks */
        if (otl_feed(&P, in[k])) otl_service(&P);
      }
    }
    if (want_reset) {
      want_reset = 0;
      otl_init(&P, &ops);
      power_on(&D);
      otl_greet(&P);
    }
    /* audio: catch up with real time, block by block (at most 100 ms behind) */
    due = (uint64_t)((now_s() - t0) * D.rate);
    if (due > produced + D.rate / 10) produced = due - D.rate / 10;
    while (produced + BLOCK <= due) {
      run_block(&D, buf, BLOCK);
      emit_iq(&D, buf, BLOCK);
      produced += BLOCK;
    }
  }
  if (link_path) {
    char cur[512];
    ssize_t n = readlink(link_path, cur, sizeof cur - 1);
    if (n > 0) {
      cur[n] = '\0';
      if (strcmp(cur, dev_path) == 0) unlink(link_path);
    }
  }
  if (hold >= 0 && hold != D.fd) close(hold);
  close(D.fd);
  return 0;
}
