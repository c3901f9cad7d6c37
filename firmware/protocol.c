/*
 * orthotone device link, protocol version 1: parser and dispatcher. See protocol.h and
 * docs/protocol.md. C99, no malloc, no stdio, no locale: numbers are parsed and printed here.
 */
#include "protocol.h"

#include <string.h>

/* ---- small helpers ------------------------------------------------------------------------ */

static const double POW10[10] = {1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9};

int otl_parse_decimal(const char *s, double *out) {
  int neg = 0, idig = 0, fdig = 0;
  uint64_t ip = 0, fp = 0;
  if (*s == '+' || *s == '-') neg = (*s++ == '-');
  while (*s >= '0' && *s <= '9') {
    if (++idig > 9) return -1;
    ip = ip * 10u + (uint64_t)(*s++ - '0');
  }
  if (*s == '.') {
    s++;
    while (*s >= '0' && *s <= '9') {
      if (++fdig > 9) return -1;
      fp = fp * 10u + (uint64_t)(*s++ - '0');
    }
  }
  if (*s != '\0' || idig + fdig == 0) return -1;
  {
    double v = (double)ip + (double)fp / POW10[fdig];
    *out = neg ? -v : v;
  }
  return 0;
}

static int parse_uint(const char *s, uint32_t max, uint32_t *out) {
  uint32_t v = 0;
  if (*s == '\0') return -1;
  while (*s) {
    if (*s < '0' || *s > '9') return -1;
    if (v > (max - (uint32_t)(*s - '0')) / 10u) return -1;
    v = v * 10u + (uint32_t)(*s++ - '0');
  }
  *out = v;
  return 0;
}

static int parse_hex32(const char *s, int maxdig, uint32_t *out) {
  uint32_t v = 0;
  int n = 0;
  for (; *s; s++, n++) {
    uint32_t d;
    if (n >= maxdig) return -1;
    if (*s >= '0' && *s <= '9') d = (uint32_t)(*s - '0');
    else if (*s >= 'A' && *s <= 'F') d = (uint32_t)(*s - 'A' + 10);
    else if (*s >= 'a' && *s <= 'f') d = (uint32_t)(*s - 'a' + 10);
    else return -1;
    v = (v << 4) | d;
  }
  if (n == 0) return -1;
  *out = v;
  return 0;
}

size_t otl_format_decimal(char *buf, size_t cap, double x, int digits) {
  char tmp[40];
  size_t n = 0, i;
  uint64_t scaled, ip, fp;
  int neg = x < 0, d;
  if (digits < 0) digits = 0;
  if (digits > 9) digits = 9;
  if (!(x == x)) x = 0; /* NaN never leaves the device */
  if (neg) x = -x;
  if (x > 1e9) x = 1e9;
  scaled = (uint64_t)(x * POW10[digits] + 0.5);
  ip = scaled / (uint64_t)POW10[digits];
  fp = scaled % (uint64_t)POW10[digits];
  if (neg && scaled != 0) tmp[n++] = '-';
  {
    char rev[12];
    int k = 0;
    do {
      rev[k++] = (char)('0' + (int)(ip % 10u));
      ip /= 10u;
    } while (ip && k < 11);
    while (k) tmp[n++] = rev[--k];
  }
  if (fp) {
    char f[10];
    tmp[n++] = '.';
    for (d = digits - 1; d >= 0; d--) {
      f[d] = (char)('0' + (int)(fp % 10u));
      fp /= 10u;
    }
    d = digits;
    while (d > 0 && f[d - 1] == '0') d--;
    for (i = 0; i < (size_t)d; i++) tmp[n++] = f[i];
  }
  if (n + 1 > cap) n = cap ? cap - 1 : 0;
  memcpy(buf, tmp, n);
  if (cap) buf[n] = '\0';
  return n;
}

uint16_t otl_crc16_code(uint16_t crc, int32_t code) {
  uint32_t u = (uint32_t)code;
  int b, k;
  for (b = 0; b < 4; b++) {
    crc ^= (uint16_t)(((u >> (8 * b)) & 0xffu) << 8);
    for (k = 0; k < 8; k++) crc = (crc & 0x8000u) ? (uint16_t)((crc << 1) ^ 0x1021u) : (uint16_t)(crc << 1);
  }
  return crc;
}

/* ---- answer builder ----------------------------------------------------------------------- */

typedef struct {
  char *buf;
  size_t len, cap;
} outbuf;

static void put(outbuf *o, const char *s) {
  while (*s && o->len + 2 < o->cap) o->buf[o->len++] = *s++;
}

static void put_u(outbuf *o, uint32_t v) {
  char rev[12];
  int k = 0;
  char one[2] = {0, 0};
  do {
    rev[k++] = (char)('0' + (int)(v % 10u));
    v /= 10u;
  } while (v);
  while (k) {
    one[0] = rev[--k];
    put(o, one);
  }
}

static void put_d(outbuf *o, double x, int digits) {
  char t[40];
  otl_format_decimal(t, sizeof t, x, digits);
  put(o, t);
}

static void put_hex4(outbuf *o, uint16_t v) {
  static const char H[] = "0123456789ABCDEF";
  char t[5];
  t[0] = H[(v >> 12) & 15];
  t[1] = H[(v >> 8) & 15];
  t[2] = H[(v >> 4) & 15];
  t[3] = H[v & 15];
  t[4] = 0;
  put(o, t);
}

static void begin(otl_parser *p, outbuf *o, uint32_t tag) {
  o->buf = p->out;
  o->len = 0;
  o->cap = sizeof p->out;
  put_u(o, tag);
}

static void send(otl_parser *p, outbuf *o) {
  o->buf[o->len++] = '\n';
  p->dev->write(p->dev->ctx, o->buf, o->len);
}

static void send_err(otl_parser *p, uint32_t tag, const char *code, const char *text, const char *more) {
  outbuf o;
  p->errors++;
  begin(p, &o, tag);
  put(&o, " err ");
  put(&o, code);
  put(&o, " ");
  put(&o, text);
  if (more) put(&o, more);
  send(p, &o);
}

static void put_greeting(otl_parser *p, outbuf *o) {
  otl_info in;
  p->dev->info(p->dev->ctx, &in);
  put(o, " link=");
  put_u(o, OTL_VERSION);
  put(o, " rate=");
  put_u(o, in.rate_hz);
  put(o, " arith=");
  put(o, in.arith);
  put(o, " gres=");
  put_d(o, in.gain_res_db, 7);
  put(o, " pres=");
  put_d(o, in.phase_res_deg, 7);
  put(o, " dres=");
  put_d(o, in.dc_res, 9);
  put(o, " gmax=");
  put_d(o, in.gain_max_db, 3);
  put(o, " pmax=");
  put_d(o, in.phase_max_deg, 3);
  put(o, " dmax=");
  put_d(o, in.dc_max, 6);
  put(o, " ramp=");
  put_u(o, in.ramp_ms);
  put(o, " taps=");
  put_u(o, in.max_taps);
  put(o, " secs=");
  put_u(o, in.max_sections);
  put(o, " name=");
  put(o, in.name);
}

static void put_trims(outbuf *o, const otl_trims *t) {
  put(o, " gain=");
  put_d(o, t->gain_db, 9);
  put(o, " phase=");
  put_d(o, t->phase_deg, 9);
  put(o, " dci=");
  put_d(o, t->dc_i, 9);
  put(o, " dcq=");
  put_d(o, t->dc_q, 9);
}

/* ---- public ------------------------------------------------------------------------------- */

void otl_init(otl_parser *p, const otl_device *dev) {
  memset(p, 0, sizeof *p);
  p->dev = dev;
}

int otl_feed(otl_parser *p, uint8_t byte) {
  if (byte == '\n') {
    if (p->has_pending) {
      p->busy = 1; /* the previous line is still being handled: this one is dropped */
    } else {
      memcpy(p->pending, p->line, p->len);
      p->pending[p->len] = '\0';
      p->pending_long = p->overflow;
      p->has_pending = 1;
    }
    p->len = 0;
    p->overflow = 0;
    return p->has_pending;
  }
  if (byte == '\r' && !p->overflow) return p->has_pending;
  if (p->len < OTL_LINE_MAX) p->line[p->len++] = (char)byte;
  else p->overflow = 1;
  return p->has_pending;
}

void otl_greet(otl_parser *p) {
  outbuf o;
  o.buf = p->out;
  o.len = 0;
  o.cap = sizeof p->out;
  put(&o, "* hello");
  put_greeting(p, &o);
  send(p, &o);
}

#define MAX_WORDS 12

/* Finds `key=` among the words; returns the value or NULL. Marks the word used. */
static const char *value_of(char **w, int n, uint32_t *used, const char *key) {
  size_t k = strlen(key);
  int i;
  for (i = 0; i < n; i++) {
    if (strncmp(w[i], key, k) == 0 && w[i][k] == '=') {
      *used |= 1u << i;
      return w[i] + k + 1;
    }
  }
  return NULL;
}

static int all_used(int n, uint32_t used, int from) {
  int i;
  for (i = from; i < n; i++)
    if (!(used & (1u << i))) return i;
  return -1;
}

static void do_set(otl_parser *p, uint32_t tag, char **w, int n) {
  static const char *const KEYS[4] = {"gain", "phase", "dci", "dcq"};
  static const char *const UNITS[4] = {" dB", " degrees", " full scale", " full scale"};
  otl_info in;
  otl_trims want, applied;
  double v[4] = {0, 0, 0, 0}, lim[4];
  unsigned mask = 0;
  uint32_t used = 1; /* word 0 is the verb */
  int i, bad;
  p->dev->info(p->dev->ctx, &in);
  lim[0] = in.gain_max_db;
  lim[1] = in.phase_max_deg;
  lim[2] = lim[3] = in.dc_max;
  for (i = 0; i < 4; i++) {
    const char *s = value_of(w, n, &used, KEYS[i]);
    if (!s) continue;
    if (otl_parse_decimal(s, &v[i]) != 0) {
      send_err(p, tag, "SYNTAX", "not a decimal number: ", s);
      return;
    }
    mask |= 1u << i;
  }
  bad = all_used(n, used, 1);
  if (bad >= 0) {
    send_err(p, tag, "UNKNOWN", "set takes gain=, phase=, dci=, dcq=; not ", w[bad]);
    return;
  }
  if (!mask) {
    send_err(p, tag, "SYNTAX", "set needs at least one of gain=, phase=, dci=, dcq=", NULL);
    return;
  }
  for (i = 0; i < 4; i++) {
    if ((mask & (1u << i)) && (v[i] > lim[i] || v[i] < -lim[i])) {
      outbuf o;
      p->errors++;
      begin(p, &o, tag);
      put(&o, " err RANGE ");
      put(&o, KEYS[i]);
      put(&o, " ");
      put_d(&o, v[i], 9);
      put(&o, UNITS[i]);
      put(&o, " is outside -");
      put_d(&o, lim[i], 6);
      put(&o, "..");
      put_d(&o, lim[i], 6);
      put(&o, UNITS[i]);
      put(&o, "; nothing changed");
      send(p, &o);
      return;
    }
  }
  want.gain_db = v[0];
  want.phase_deg = v[1];
  want.dc_i = v[2];
  want.dc_q = v[3];
  if (p->dev->set_trims(p->dev->ctx, &want, mask, &applied) != OTL_OK) {
    send_err(p, tag, "RANGE", "the device could not apply these trims; nothing changed", NULL);
    return;
  }
  {
    outbuf o;
    begin(p, &o, tag);
    put(&o, " ok trims");
    put_trims(&o, &applied);
    send(p, &o);
  }
}

static void do_source(otl_parser *p, uint32_t tag, char **w, int n) {
  otl_info in;
  otl_source s;
  uint32_t used = 3;
  double nyq;
  int bad;
  p->dev->info(p->dev->ctx, &in);
  nyq = in.rate_hz / 2.0;
  memset(&s, 0, sizeof s);
  if (n < 2) {
    send_err(p, tag, "SYNTAX", "source tone f= a=, source two f= g= a=, or source input", NULL);
    return;
  }
  if (strcmp(w[1], "input") == 0) {
    s.kind = OTL_SRC_INPUT;
  } else if (strcmp(w[1], "tone") == 0 || strcmp(w[1], "two") == 0) {
    const char *f = value_of(w, n, &used, "f");
    const char *g = w[1][1] == 'w' ? value_of(w, n, &used, "g") : NULL;
    const char *a = value_of(w, n, &used, "a");
    s.kind = w[1][1] == 'w' ? OTL_SRC_TWO : OTL_SRC_TONE;
    if (!f || !a || (s.kind == OTL_SRC_TWO && !g) || otl_parse_decimal(f, &s.f1_hz) ||
        otl_parse_decimal(a, &s.amplitude) || (g && otl_parse_decimal(g, &s.f2_hz))) {
      send_err(p, tag, "SYNTAX", "source tone f=HZ a=FS, or source two f=HZ g=HZ a=FS", NULL);
      return;
    }
    if (!(s.f1_hz > 0 && s.f1_hz < nyq) || (s.kind == OTL_SRC_TWO && !(s.f2_hz > 0 && s.f2_hz < nyq))) {
      send_err(p, tag, "RANGE", "a tone must lie between 0 Hz and half the sample rate", NULL);
      return;
    }
    if (!(s.amplitude >= 0 && s.amplitude <= 1)) {
      send_err(p, tag, "RANGE", "amplitude a= must be from 0 to 1 (full scale)", NULL);
      return;
    }
  } else {
    send_err(p, tag, "UNKNOWN", "source is tone, two or input; not ", w[1]);
    return;
  }
  bad = all_used(n, used, 2);
  if (s.kind == OTL_SRC_INPUT) bad = n > 2 ? 2 : -1;
  if (bad >= 0) {
    send_err(p, tag, "UNKNOWN", "unexpected ", w[bad]);
    return;
  }
  if (p->dev->set_source(p->dev->ctx, &s) != OTL_OK) {
    send_err(p, tag, "RANGE", "the device cannot play this source", NULL);
    return;
  }
  {
    outbuf o;
    begin(p, &o, tag);
    put(&o, " ok source ");
    put(&o, w[1]);
    if (s.kind != OTL_SRC_INPUT) {
      put(&o, " f=");
      put_d(&o, s.f1_hz, 3);
      if (s.kind == OTL_SRC_TWO) {
        put(&o, " g=");
        put_d(&o, s.f2_hz, 3);
      }
      put(&o, " a=");
      put_d(&o, s.amplitude, 6);
    }
    send(p, &o);
  }
}

static int parse_code(const char *s, const char *arith, int32_t *out) {
  if (strcmp(arith, "float32") == 0) {
    uint32_t u;
    if (s[0] != 'x' || parse_hex32(s + 1, 8, &u)) return -1;
    *out = (int32_t)u;
    return 0;
  } else {
    uint32_t mag, max = strcmp(arith, "q15") == 0 ? 32767u : 2147483647u;
    int neg = 0;
    if (*s == '-' || *s == '+') neg = (*s++ == '-');
    if (parse_uint(s, max, &mag)) return -1;
    *out = neg ? -(int32_t)mag : (int32_t)mag;
    return 0;
  }
}

static void net_fail(otl_parser *p) {
  if (p->net_loading) p->dev->net_abort(p->dev->ctx);
  p->net_loading = 0;
}

static void do_net(otl_parser *p, uint32_t tag, char **w, int n) {
  otl_info in;
  uint32_t used = 3;
  outbuf o;
  p->dev->info(p->dev->ctx, &in);
  if (n < 2) {
    send_err(p, tag, "SYNTAX", "net begin, net put, net ord or net end", NULL);
    return;
  }
  if (strcmp(w[1], "begin") == 0) {
    otl_net_shape sh;
    memset(&sh, 0, sizeof sh);
    net_fail(p);
    if (n >= 3 && strcmp(w[2], "fir") == 0) {
      const char *cnt = value_of(w, n, &used, "n");
      sh.kind = OTL_NET_FIR;
      if (!cnt || parse_uint(cnt, 1000000u, &sh.count) || sh.count == 0) {
        send_err(p, tag, "SYNTAX", "net begin fir n=TAPS", NULL);
        return;
      }
      if (sh.count > in.max_taps) {
        send_err(p, tag, "RANGE", "more taps than the device holds (see taps= in the greeting)", NULL);
        return;
      }
    } else if (n >= 3 && strcmp(w[2], "allpass") == 0) {
      const char *a = value_of(w, n, &used, "i"), *b = value_of(w, n, &used, "q");
      const char *c = value_of(w, n, &used, "di"), *d = value_of(w, n, &used, "dq");
      sh.kind = OTL_NET_ALLPASS;
      if (!a || !b || !c || !d || parse_uint(a, 1000u, &sh.i_sections) || parse_uint(b, 1000u, &sh.q_sections) ||
          parse_uint(c, 1000u, &sh.i_delay) || parse_uint(d, 1000u, &sh.q_delay)) {
        send_err(p, tag, "SYNTAX", "net begin allpass i=N q=N di=D dq=D", NULL);
        return;
      }
      if (sh.i_sections > in.max_sections || sh.q_sections > in.max_sections) {
        send_err(p, tag, "RANGE", "more sections than the device holds (see secs= in the greeting)", NULL);
        return;
      }
      sh.count = sh.i_sections + sh.q_sections;
    } else {
      send_err(p, tag, "SYNTAX", "net begin fir n=N, or net begin allpass i=N q=N di=D dq=D", NULL);
      return;
    }
    if (all_used(n, used, 3) >= 0) {
      send_err(p, tag, "UNKNOWN", "unexpected ", w[all_used(n, used, 3)]);
      return;
    }
    if (p->dev->net_begin(p->dev->ctx, &sh) != OTL_OK) {
      send_err(p, tag, "RANGE", "the device cannot hold this network", NULL);
      return;
    }
    p->net_loading = 1;
    p->net_shape = sh;
    p->net_next = 0;
    p->net_crc = 0xffffu;
    begin(p, &o, tag);
    put(&o, " ok net begin");
    send(p, &o);
    return;
  }
  if (!p->net_loading) {
    send_err(p, tag, "STATE", "no network is loading: send net begin first", NULL);
    return;
  }
  if (strcmp(w[1], "put") == 0 || strcmp(w[1], "ord") == 0) {
    int is_put = w[1][0] == 'p';
    uint32_t at, k = 0, start;
    const char *ats = value_of(w, n, &used, "at");
    char *list = (char *)value_of(w, n, &used, is_put ? "v" : "o");
    if (!ats || !list || parse_uint(ats, 1000000u, &at) || all_used(n, used, 2) >= 0) {
      send_err(p, tag, "SYNTAX", is_put ? "net put at=K v=C,C,..." : "net ord at=K o=O,O,...", NULL);
      return;
    }
    if (is_put && at != p->net_next) {
      send_err(p, tag, "STATE", "coefficients must come in index order: expected another at=", NULL);
      net_fail(p);
      return;
    }
    start = at;
    while (*list) {
      char *comma = strchr(list, ',');
      if (comma) *comma = '\0';
      if (at >= p->net_shape.count) {
        send_err(p, tag, "RANGE", "more coefficients than net begin announced", NULL);
        net_fail(p);
        return;
      }
      if (is_put) {
        int32_t code;
        if (parse_code(list, in.arith, &code)) {
          send_err(p, tag, "SYNTAX", "not a coefficient code in the device's arithmetic: ", list);
          net_fail(p);
          return;
        }
        p->dev->net_put(p->dev->ctx, at, code);
        p->net_crc = otl_crc16_code(p->net_crc, code);
        p->net_next = at + 1;
      } else {
        uint32_t ord;
        if (p->net_shape.kind != OTL_NET_ALLPASS || parse_uint(list, 2u, &ord) || ord < 1) {
          send_err(p, tag, "SYNTAX", "a section order is 1 or 2 (all-pass networks only)", NULL);
          net_fail(p);
          return;
        }
        p->dev->net_order(p->dev->ctx, at, (int)ord);
      }
      at++;
      k++;
      if (!comma) break;
      list = comma + 1;
    }
    begin(p, &o, tag);
    put(&o, is_put ? " ok net put at=" : " ok net ord at=");
    put_u(&o, start);
    put(&o, " n=");
    put_u(&o, k);
    send(p, &o);
    return;
  }
  if (strcmp(w[1], "end") == 0) {
    uint32_t crc;
    const char *c = value_of(w, n, &used, "crc");
    if (!c || parse_hex32(c, 4, &crc)) {
      send_err(p, tag, "SYNTAX", "net end crc=HHHH", NULL);
      return;
    }
    if (p->net_next != p->net_shape.count) {
      send_err(p, tag, "STATE", "coefficients are missing; the old network runs on", NULL);
      net_fail(p);
      return;
    }
    if ((uint16_t)crc != p->net_crc) {
      send_err(p, tag, "CHECK", "checksum does not match; the old network runs on", NULL);
      net_fail(p);
      return;
    }
    p->net_loading = 0;
    if (p->dev->net_commit(p->dev->ctx) != OTL_OK) {
      send_err(p, tag, "STATE", "the device could not switch to the network", NULL);
      return;
    }
    begin(p, &o, tag);
    put(&o, " ok net end crc=");
    put_hex4(&o, (uint16_t)crc);
    send(p, &o);
    return;
  }
  send_err(p, tag, "UNKNOWN", "net begin, put, ord or end; not ", w[1]);
}

int otl_service(otl_parser *p) {
  char *w[MAX_WORDS];
  int n = 0, nonprint = 0;
  uint32_t tag = 0;
  char *s;
  outbuf o;
  if (!p->has_pending) return 0;
  p->lines++;
  s = p->pending;
  /* split into words in place */
  while (*s) {
    while (*s == ' ') *s++ = '\0';
    if (!*s) break;
    if (n == MAX_WORDS) {
      n = MAX_WORDS + 1;
      break;
    }
    w[n++] = s;
    while (*s && *s != ' ') {
      if ((unsigned char)*s < 0x20 || (unsigned char)*s > 0x7e) nonprint = 1;
      s++;
    }
  }
  if (n == 0) goto done; /* an empty line is ignored */
  if (nonprint || parse_uint(w[0], 65535u, &tag) || tag == 0) {
    tag = 0;
    if (p->pending_long) send_err(p, 0, "LONG", "line longer than 96 characters; dropped", NULL);
    else send_err(p, 0, "SYNTAX", "a line starts with a tag from 1 to 65535, e.g. '1 hello'", NULL);
    goto done;
  }
  if (p->pending_long) {
    send_err(p, tag, "LONG", "line longer than 96 characters; dropped", NULL);
    goto done;
  }
  if (p->busy) {
    /* the line after this one was dropped; its tag is unknown, so the notice carries tag 0 */
    p->busy = 0;
    send_err(p, 0, "BUSY", "a line arrived while the previous one was handled and was dropped; send one at a time", NULL);
  }
  if (n > MAX_WORDS) {
    send_err(p, tag, "SYNTAX", "too many words", NULL);
    goto done;
  }
  if (n < 2) {
    send_err(p, tag, "SYNTAX", "a command follows the tag", NULL);
    goto done;
  }
  {
    char **a = w + 1;
    int m = n - 1;
    if (strcmp(a[0], "hello") == 0 && m == 1) {
      begin(p, &o, tag);
      put(&o, " ok hello");
      put_greeting(p, &o);
      send(p, &o);
    } else if (strcmp(a[0], "trims") == 0 && m == 1) {
      otl_trims t;
      p->dev->get_trims(p->dev->ctx, &t);
      begin(p, &o, tag);
      put(&o, " ok trims");
      put_trims(&o, &t);
      send(p, &o);
    } else if (strcmp(a[0], "set") == 0) {
      do_set(p, tag, a, m);
    } else if (strcmp(a[0], "sideband") == 0) {
      if (m == 2 && (strcmp(a[1], "upper") == 0 || strcmp(a[1], "lower") == 0)) {
        if (p->dev->set_sideband(p->dev->ctx, a[1][0] == 'l') != OTL_OK) {
          send_err(p, tag, "STATE", "the device cannot change the sideband now", NULL);
        } else {
          begin(p, &o, tag);
          put(&o, " ok sideband ");
          put(&o, a[1]);
          send(p, &o);
        }
      } else {
        send_err(p, tag, "SYNTAX", "sideband upper or sideband lower", NULL);
      }
    } else if (strcmp(a[0], "source") == 0) {
      do_source(p, tag, a, m);
    } else if (strcmp(a[0], "net") == 0) {
      do_net(p, tag, a, m);
    } else if (strcmp(a[0], "store") == 0 && m == 1) {
      if (p->dev->store(p->dev->ctx) != OTL_OK) {
        send_err(p, tag, "STORE", "writing non-volatile memory failed; the settings in use are unchanged", NULL);
      } else {
        begin(p, &o, tag);
        put(&o, " ok store");
        send(p, &o);
      }
    } else if (strcmp(a[0], "hello") == 0 || strcmp(a[0], "trims") == 0 || strcmp(a[0], "store") == 0) {
      send_err(p, tag, "SYNTAX", "this command takes no arguments: ", a[0]);
    } else {
      outbuf e;
      p->errors++;
      begin(p, &e, tag);
      put(&e, " err UNKNOWN no command ");
      put(&e, a[0]);
      put(&e, ": use hello, trims, set, sideband, source, net or store");
      send(p, &e);
    }
  }
done:
  p->has_pending = 0;
  return 1;
}
