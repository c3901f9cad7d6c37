/*
 * orthotone device link, protocol version 1: parser and dispatcher (C99, no malloc).
 *
 * Bytes from the UART go to otl_feed() one at a time (safe to call from the receive interrupt:
 * it only copies into a fixed line buffer). When it returns 1 a complete line is waiting; the
 * main loop calls otl_service() to handle it, at a block boundary of the audio kernel, so a
 * trim set or a network switch takes effect between blocks. The answer goes out through the
 * device's write callback. The grammar and the answers are in docs/protocol.md.
 */
#ifndef ORTHOTONE_PROTOCOL_H
#define ORTHOTONE_PROTOCOL_H

#include <stddef.h>
#include <stdint.h>

#ifndef OTL_VERSION
#define OTL_VERSION 1 /* a test build may claim another version with -DOTL_VERSION=N */
#endif
#define OTL_LINE_MAX 96 /* characters before the LF */
#define OTL_OUT_MAX 200 /* longest answer */

/* Trims in the protocol's units: dB, degrees, full scale. */
typedef struct {
  double gain_db;
  double phase_deg;
  double dc_i;
  double dc_q;
} otl_trims;

/* Bits of otl_trims given in a `set` command. */
#define OTL_GAIN 1u
#define OTL_PHASE 2u
#define OTL_DCI 4u
#define OTL_DCQ 8u

/* What the greeting says. */
typedef struct {
  uint32_t rate_hz;
  const char *arith;        /* "q15", "q31" or "float32" */
  double gain_res_db;       /* resolution near zero */
  double phase_res_deg;
  double dc_res;
  double gain_max_db;       /* limits, ± */
  double phase_max_deg;
  double dc_max;
  uint32_t ramp_ms;
  uint32_t max_taps;
  uint32_t max_sections;
  const char *name;         /* no spaces */
} otl_info;

typedef enum { OTL_SRC_TONE = 0, OTL_SRC_TWO = 1, OTL_SRC_INPUT = 2 } otl_source_kind;

typedef struct {
  otl_source_kind kind;
  double f1_hz, f2_hz, amplitude;
} otl_source;

typedef enum { OTL_NET_FIR = 0, OTL_NET_ALLPASS = 1 } otl_net_kind;

typedef struct {
  otl_net_kind kind;
  uint32_t count;       /* taps, or sections of both branches */
  uint32_t i_sections, q_sections;
  uint32_t i_delay, q_delay;
} otl_net_shape;

/* Result codes of the device's operations (map to the protocol's error codes). */
typedef enum {
  OTL_OK = 0,
  OTL_E_RANGE = 1,
  OTL_E_STATE = 2,
  OTL_E_STORE = 3
} otl_result;

/*
 * What the device provides. ctx is passed back unchanged. Every operation runs from
 * otl_service(), never from otl_feed().
 */
typedef struct {
  void *ctx;
  void (*write)(void *ctx, const char *bytes, size_t n);
  void (*info)(void *ctx, otl_info *out);
  /* Apply the trims flagged in mask (the others keep their value) atomically and ramped;
   * fill *applied with the full set as applied, converted back from internal values.
   * Values were range-checked against info() already. */
  otl_result (*set_trims)(void *ctx, const otl_trims *want, unsigned mask, otl_trims *applied);
  void (*get_trims)(void *ctx, otl_trims *out);
  otl_result (*set_sideband)(void *ctx, int lower);
  otl_result (*set_source)(void *ctx, const otl_source *s);
  /* Network loading into the spare slot: begin, one coefficient code at a time (index order),
   * section orders, then commit (switch at a block boundary, cross-faded) or abort. */
  otl_result (*net_begin)(void *ctx, const otl_net_shape *shape);
  otl_result (*net_put)(void *ctx, uint32_t index, int32_t code);
  otl_result (*net_order)(void *ctx, uint32_t index, int order);
  otl_result (*net_commit)(void *ctx);
  void (*net_abort)(void *ctx);
  otl_result (*store)(void *ctx);
} otl_device;

typedef struct {
  const otl_device *dev;
  /* receive side (written by otl_feed) */
  char line[OTL_LINE_MAX + 1];
  uint32_t len;
  uint8_t overflow;
  /* the line waiting for otl_service */
  char pending[OTL_LINE_MAX + 1];
  volatile uint8_t has_pending;
  uint8_t pending_long;
  volatile uint8_t busy;
  /* network loading */
  uint8_t net_loading;
  otl_net_shape net_shape;
  uint32_t net_next;
  uint16_t net_crc;
  /* statistics */
  uint32_t lines, errors;
  char out[OTL_OUT_MAX];
} otl_parser;

void otl_init(otl_parser *p, const otl_device *dev);
/* Feeds one received byte. Returns 1 when a line is waiting for otl_service(). */
int otl_feed(otl_parser *p, uint8_t byte);
/* Handles the waiting line, if any, and writes its answer. Returns 1 if a line was handled. */
int otl_service(otl_parser *p);
/* Writes the unsolicited greeting `* hello …` (after reset). */
void otl_greet(otl_parser *p);

/* Helpers, exposed for tests and for the device's own use. */
int otl_parse_decimal(const char *s, double *out);          /* 0 on success */
size_t otl_format_decimal(char *buf, size_t cap, double x, int digits);
uint16_t otl_crc16_code(uint16_t crc, int32_t code);          /* CRC-16/CCITT-FALSE, LSB first */

#endif
