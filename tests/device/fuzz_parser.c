/*
 * Feeds seeded random bytes (and random printable lines, over-long lines, lines of random words)
 * through firmware/protocol.c, byte by byte, interleaved with valid commands, and checks that:
 * every answer is one line of printable ASCII no longer than OTL_OUT_MAX; a valid command after
 * the noise is still answered correctly. Built with the address and undefined-behaviour
 * sanitizers when the compiler has them, so an out-of-bounds access fails the run.
 * usage: fuzz_parser SEED ROUNDS
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "protocol.h"

static char last[OTL_OUT_MAX + 8];
static size_t last_len;
static unsigned long answers, bad;

static void w(void *ctx, const char *b, size_t n) {
  size_t i;
  (void)ctx;
  answers++;
  if (n == 0 || n > OTL_OUT_MAX || b[n - 1] != '\n') bad++;
  for (i = 0; i + 1 < n; i++)
    if ((unsigned char)b[i] < 0x20 || (unsigned char)b[i] > 0x7e) bad++;
  memcpy(last, b, n < sizeof last ? n : sizeof last - 1);
  last_len = n;
  last[last_len < sizeof last ? last_len : sizeof last - 1] = 0;
}
static otl_trims T;
static void info(void *c, otl_info *o) {
  (void)c;
  memset(o, 0, sizeof *o);
  o->rate_hz = 48000;
  o->arith = "q15";
  o->gain_res_db = 0.0005;
  o->phase_res_deg = 0.003;
  o->dc_res = 0.00003;
  o->gain_max_db = 6;
  o->phase_max_deg = 45;
  o->dc_max = 1;
  o->ramp_ms = 20;
  o->max_taps = 127;
  o->max_sections = 12;
  o->name = "fuzz";
}
static otl_result st(void *c, const otl_trims *t, unsigned m, otl_trims *a) {
  (void)c;
  if (m & OTL_GAIN) T.gain_db = t->gain_db;
  if (m & OTL_PHASE) T.phase_deg = t->phase_deg;
  if (m & OTL_DCI) T.dc_i = t->dc_i;
  if (m & OTL_DCQ) T.dc_q = t->dc_q;
  *a = T;
  return OTL_OK;
}
static void gt(void *c, otl_trims *o) { (void)c; *o = T; }
static otl_result sb(void *c, int l) { (void)c; (void)l; return OTL_OK; }
static otl_result ss(void *c, const otl_source *s) { (void)c; (void)s; return OTL_OK; }
static unsigned net_count;
static otl_result nb(void *c, const otl_net_shape *s) { (void)c; net_count = s->count; return OTL_OK; }
static otl_result np(void *c, uint32_t i, int32_t v) { (void)c; (void)v; if (i >= net_count) bad++; return OTL_OK; }
static otl_result no(void *c, uint32_t i, int o) { (void)c; if (i >= net_count || o < 1 || o > 2) bad++; return OTL_OK; }
static otl_result nc(void *c) { (void)c; return OTL_OK; }
static void na(void *c) { (void)c; }
static otl_result sto(void *c) { (void)c; return OTL_OK; }

static unsigned long rng = 1;
static unsigned rnd(void) {
  rng = rng * 6364136223846793005UL + 1442695040888963407UL;
  return (unsigned)(rng >> 33);
}

static otl_parser P;
static void feed(const char *s, size_t n) {
  size_t i;
  for (i = 0; i < n; i++)
    if (otl_feed(&P, (uint8_t)s[i])) otl_service(&P);
}

int main(int argc, char **argv) {
  static const otl_device dev = {0, w, info, st, gt, sb, ss, nb, np, no, nc, na, sto};
  static const char *words[] = {"hello", "trims", "set", "gain=", "phase=0.5", "dci=-1", "net", "begin",
                                "put", "ord", "end", "allpass", "fir", "n=3", "i=1", "q=1", "di=0",
                                "dq=0", "at=0", "v=1,2,3", "o=2", "crc=FFFF", "source", "tone", "two",
                                "input", "f=1000", "g=2000", "a=0.5", "sideband", "upper", "store",
                                "=", ",", "-", ".", "99999999999", "-0.0000000001", "x3F000000"};
  unsigned long rounds, r, k;
  char buf[400];
  if (argc < 3) return 2;
  rng = strtoul(argv[1], NULL, 10);
  rounds = strtoul(argv[2], NULL, 10);
  otl_init(&P, &dev);
  for (r = 0; r < rounds; r++) {
    unsigned kind = rnd() % 4, n = rnd() % 300;
    if (kind == 0) { /* raw bytes, any value */
      for (k = 0; k < n; k++) buf[k] = (char)(rnd() & 0xff);
      feed(buf, n);
    } else if (kind == 1) { /* printable noise lines */
      for (k = 0; k < n; k++) buf[k] = (char)(0x20 + rnd() % 95);
      buf[n] = '\n';
      feed(buf, n + 1);
    } else { /* lines of protocol words in random order, with a tag */
      size_t len = (size_t)sprintf(buf, "%u", rnd() % 70000);
      unsigned m = rnd() % 9;
      for (k = 0; k < m && len < 300; k++) len += (size_t)sprintf(buf + len, " %s", words[rnd() % (sizeof words / sizeof *words)]);
      buf[len++] = '\n';
      feed(buf, len);
    }
    if (r % 50 == 49) {
      /* end any partial line, then a valid command must be answered exactly */
      feed("\n", 1);
      feed("\n", 1);
      last_len = 0;
      feed("4242 set gain=0.25\n", 19);
      if (strncmp(last, "4242 ok trims gain=0.25 ", 24) != 0) {
        fprintf(stderr, "round %lu: valid command answered '%s'\n", r, last);
        return 1;
      }
    }
  }
  printf("{\"answers\":%lu,\"bad\":%lu,\"lines\":%lu}\n", answers, bad, (unsigned long)P.lines);
  return bad ? 1 : 0;
}
