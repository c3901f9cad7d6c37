/*
 * host-check: runs the kit on the host. Reads input samples from stdin, one decimal number per
 * line (full scale +-1), and writes "i q" lines to stdout (full scale +-1, digits enough to
 * round-trip). Trims in the library's units, converted with the host helper:
 *   host-check [--gain-db DB] [--phase-deg DEG] [--dc-i FS] [--dc-q FS] [--skew-samples N] [--lower]
 * Without trim options the kit's start-up trims apply (a profile's, when the kit was made with one).
 * Exit status 2 for a bad option or value (one line on stderr).
 */
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ortho_host.h"
#include "ortho_kit.h"

#define BLOCK 256

static int parse_number(const char *opt, const char *text, double *out) {
  char *end;
  errno = 0;
  *out = strtod(text, &end);
  if (end == text || *end != '\0' || errno != 0) {
    fprintf(stderr, "host-check: %s %s is not a number: give a decimal value\n", opt, text);
    return -1;
  }
  return 0;
}

int main(int argc, char **argv) {
  static ortho_t gen; /* static storage, not a global: only main sees it */
  ortho_trims_t trims;
  double gain_db = 0, phase_deg = 0, dc_i = 0, dc_q = 0, skew = 0;
  int lower = 0, given = 0, k;
  ortho_sample_t in[BLOCK], oi[BLOCK], oq[BLOCK];
  char line[256];
  size_t n = 0;
  unsigned long lineno = 0;

  for (k = 1; k < argc; k++) {
    double *target = NULL;
    if (strcmp(argv[k], "--lower") == 0) {
      lower = 1;
      given = 1;
      continue;
    }
    if (strcmp(argv[k], "--gain-db") == 0) target = &gain_db;
    else if (strcmp(argv[k], "--phase-deg") == 0) target = &phase_deg;
    else if (strcmp(argv[k], "--dc-i") == 0) target = &dc_i;
    else if (strcmp(argv[k], "--dc-q") == 0) target = &dc_q;
    else if (strcmp(argv[k], "--skew-samples") == 0) target = &skew;
    if (target == NULL || k + 1 >= argc) {
      fprintf(stderr,
              "host-check: unknown or incomplete option %s: use --gain-db, --phase-deg, --dc-i, --dc-q, "
              "--skew-samples (each with a value) or --lower\n",
              argv[k]);
      return 2;
    }
    if (parse_number(argv[k], argv[k + 1], target) != 0) return 2;
    given = 1;
    k++;
  }
  ortho_trims_neutral(&trims);
  ortho_init(&gen); /* start-up trims: the profile's, when the kit was made with one */
  if (given && ortho_trims_from_units(&trims, gain_db, phase_deg, skew, dc_i, dc_q, lower) != 0) {
    fprintf(stderr,
            "host-check: trims out of range (gain %g dB, phase %g deg, dc %g/%g FS, skew %g): keep |gain| <= 6 dB, "
            "|phase| <= 45 deg, |dc| <= 1, |skew| <= %d samples\n",
            gain_db, phase_deg, dc_i, dc_q, skew, ORTHO_MAX_SKEW);
    return 2;
  }
  if (given) ortho_set_trims(&gen, &trims);

  for (;;) {
    const int more = fgets(line, sizeof line, stdin) != NULL;
    if (more) {
      char *end;
      double x;
      lineno++;
      if (line[0] == '\n' || line[0] == '\0') continue;
      x = strtod(line, &end);
      if (end == line) {
        fprintf(stderr, "host-check: line %lu is not a number: one decimal sample per line\n", lineno);
        return 2;
      }
      in[n++] = ortho_sample_from_full_scale(x);
    }
    if (n == BLOCK || (!more && n > 0)) {
      size_t j;
      ortho_process(&gen, in, oi, oq, n);
      for (j = 0; j < n; j++)
        printf("%.17g %.17g\n", ortho_sample_to_full_scale(oi[j]), ortho_sample_to_full_scale(oq[j]));
      n = 0;
    }
    if (!more) break;
  }
  return fflush(stdout) == 0 ? 0 : 1;
}
