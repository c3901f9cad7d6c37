/**
 * The profile header's fixed-point trims, compiled with cc: a C program recomputes G·cos φ and
 * G·sin φ from the header's float trims with the C library's pow/cos/sin and rounds them itself;
 * the header's Q15/Q31 words and DC counts must agree (to the one code a float constant's own
 * rounding may move them).
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { createProfile } from '../../src/calibrate/profile.js';
import { profileToCHeader } from '../../src/export/profile-header.js';

const PROGRAM = `
#include <math.h>
#include <stdio.h>
#include "cal.h"
static long code(double v, int frac, int bits) {
  double max = ldexp(1.0, bits - 1) - 1.0, c = floor(fabs(v) * ldexp(1.0, frac) + 0.5);
  if (c > max) c = max;
  return (long)(v < 0 ? -c : c);
}
int main(void) {
  double g = pow(10.0, (double)P_CAL_GAIN_DB / 20.0), phi = (double)P_CAL_PHASE_DEG * 3.14159265358979323846 / 180.0;
  printf("%ld %ld %ld %ld\\n", P_CAL_Q15_GAIN_COS - code(g * cos(phi), 14, 16), P_CAL_Q15_GAIN_SIN - code(g * sin(phi), 14, 16),
         P_CAL_Q15_DC_I - code((double)P_CAL_DC_I, 15, 16), P_CAL_CODEC_DC_Q - code((double)P_CAL_DC_Q, P_CAL_CODEC_BITS - 1, P_CAL_CODEC_BITS));
  printf("%.17g %.17g\\n", (double)P_CAL_Q31_GAIN_COS / 1073741824.0 - g * cos(phi), (double)P_CAL_Q31_GAIN_SIN / 1073741824.0 - g * sin(phi));
  return 0;
}
`;

describe('profile header: fixed-point trims beside the floats', () => {
  it('agrees with the C library on the words, and carries the stated codec word length', () => {
    const dir = mkdtempSync(join(tmpdir(), 'ortho-cal-'));
    try {
      const p = createProfile({
        sampleRate: 48000,
        toneHz: 1000,
        trims: { gainDb: 0.73, phaseDeg: -2.4, dcI: 0.0031, dcQ: -0.0127 },
        created: new Date('2026-12-02T12:00:00Z'),
      });
      const h = profileToCHeader(p, { name: 'p', codecBits: 24 });
      expect(h).toContain('#define P_CAL_CODEC_BITS 24');
      writeFileSync(join(dir, 'cal.h'), h);
      writeFileSync(join(dir, 'main.c'), PROGRAM);
      execFileSync(
        'cc',
        [
          '-std=c99',
          '-Wall',
          '-Wextra',
          '-Werror',
          '-pedantic',
          '-o',
          join(dir, 'a'),
          join(dir, 'main.c'),
          '-lm',
        ],
        {
          cwd: dir,
        },
      );
      const [ints, q31] = execFileSync(join(dir, 'a'), { encoding: 'utf8' }).trim().split('\n');
      // The float macros are single precision: the words may differ by one code from a recomputation.
      for (const d of ints!.split(' ').map(Number)) expect(Math.abs(d)).toBeLessThanOrEqual(1);
      for (const d of q31!.split(' ').map(Number)) expect(Math.abs(d)).toBeLessThan(1e-6);
      expect(() => profileToCHeader(p, { codecBits: 40 })).toThrow(/codecBits 40/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
