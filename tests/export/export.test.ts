import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { designNetwork } from '../../src/design/design-network.js';
import { evaluateBranches, type Network, suppressionFromResponse } from '../../src/design/network.js';
import { quantizeCoefficient } from '../../src/design/quantize.js';
import { networkToCHeader } from '../../src/export/c-header.js';
import { networkToCsv } from '../../src/export/csv.js';
import { networkToJson, parseNetworkJson } from '../../src/export/network-json.js';

const allpass = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
const fir = designNetwork({ sampleRate: 8000, band: [200, 3800], method: 'fir', targetDb: 40 });

describe('network JSON', () => {
  it.each([
    ['allpass', allpass],
    ['fir', fir],
  ])('%s document round-trips exactly', (_, net) => {
    expect(parseNetworkJson(networkToJson(net))).toEqual(net);
  });
  it('names the problem with a file that is not a network', () => {
    expect(() => parseNetworkJson('{"format":"something-else","version":1}')).toThrow(
      /is not 'orthotone-network'/,
    );
    expect(() => parseNetworkJson('not json')).toThrow(/not valid JSON/);
  });
});

describe('CSV', () => {
  it('lists every FIR tap at full precision', () => {
    const rows = networkToCsv(fir as Network)
      .trim()
      .split('\n');
    expect(rows[0]).toBe('index,offset,tap');
    const taps = rows.slice(1).map((r) => Number(r.split(',')[2]));
    expect(taps).toEqual((fir as { taps: number[] }).taps);
  });
  it('lists each branch delay and section of an all-pass pair', () => {
    const rows = networkToCsv(allpass).trim().split('\n');
    const n =
      allpass.kind === 'allpass'
        ? allpass.branches.i.sections.length + allpass.branches.q.sections.length
        : 0;
    expect(rows.length).toBe(1 + 2 + n);
  });
});

/**
 * The header is compiled by the system C compiler (-std=c99 -Wall -Wextra -Werror -pedantic) into a
 * harness that runs the float network on a tone, as firmware would, and reads I and Q with a
 * single-bin DFT. The suppression it finds must equal the independent evaluation of the document
 * (float coefficients, double arithmetic: within 0.1 dB).
 */
function runHeaderHarness(net: Network, toneHz: number): number {
  const dir = mkdtempSync(join(tmpdir(), 'orthotone-c-'));
  writeFileSync(join(dir, 'net.h'), networkToCHeader(net, { name: 'net' }));
  const fs = net.sampleRate;
  const engine =
    net.kind === 'fir'
      ? `
static float hist[NET_TAPS];
static void step(float x, double *i, double *q) {
  for (int k = NET_TAPS - 1; k > 0; k--) hist[k] = hist[k - 1];
  hist[0] = x;
  double acc = 0;
  for (int k = 0; k < NET_TAPS; k++) acc += (double)net_taps_f32[k] * hist[k];
  *q = acc; *i = hist[NET_I_DELAY];
}`
      : `
static double run_branch(double x, const unsigned char *ord, const float *a, int n, double (*xs)[2], double (*ys)[2]) {
  for (int s = 0; s < n; s++) {
    int m = ord[s];
    double y = a[s] * (x - ys[s][m - 1]) + xs[s][m - 1];
    if (m == 2) { xs[s][1] = xs[s][0]; ys[s][1] = ys[s][0]; }
    xs[s][0] = x; ys[s][0] = y;
    x = y;
  }
  return x;
}
#define MAXS 64
static double ix[MAXS][2], iy[MAXS][2], qx[MAXS][2], qy[MAXS][2];
static double dlI[8], dlQ[8];
static double delay(double *dl, int d, double x) { for (int k = d; k > 0; k--) dl[k] = dl[k - 1]; dl[0] = x; return dl[d]; }
static void step(float x, double *i, double *q) {
  *i = delay(dlI, NET_I_DELAY, NET_I_SECTIONS ? run_branch(x, net_i_order, net_i_a_f32, NET_I_SECTIONS, ix, iy) : x);
  *q = delay(dlQ, NET_Q_DELAY, NET_Q_SECTIONS ? run_branch(x, net_q_order, net_q_a_f32, NET_Q_SECTIONS, qx, qy) : x);
}`;
  const src = `#include <math.h>
#include <stdio.h>
#include "net.h"
${engine}
int main(void) {
  const double f = ${toneHz}, fs = NET_SAMPLE_RATE_HZ, pi = 3.14159265358979323846;
  double ir = 0, ii = 0, qr = 0, qi = 0;
  const int settle = ${Math.round(fs)}, n = ${Math.round(fs)};
  for (int k = 0; k < settle + n; k++) {
    double i, q;
    step((float)cos(2 * pi * f * k / fs), &i, &q);
    if (k >= settle) {
      double c = cos(2 * pi * f * k / fs), s = sin(2 * pi * f * k / fs);
      ir += i * c; ii -= i * s; qr += q * c; qi -= q * s;
    }
  }
  /* wanted = |I + jQ|, image = |conj(I) + j conj(Q)| in phasor terms */
  double wr = ir - qi, wi = ii + qr, ur = ir + qi, ui = ii - qr;
  printf("%.6f\\n", 10 * log10((wr * wr + wi * wi) / (ur * ur + ui * ui)));
  return 0;
}
`;
  writeFileSync(join(dir, 'main.c'), src);
  const exe = join(dir, 'harness');
  execFileSync('cc', [
    '-std=c99',
    '-O1',
    '-Wall',
    '-Wextra',
    '-Werror',
    '-pedantic',
    '-o',
    exe,
    join(dir, 'main.c'),
    '-lm',
  ]);
  return Number(execFileSync(exe, { encoding: 'utf8' }).trim());
}

describe('C header', () => {
  it.each([
    ['all-pass, first-order sections, 48 kHz', allpass, 1000],
    [
      'all-pass, z⁻² sections, 48 kHz',
      designNetwork({
        sampleRate: 48000,
        band: [200, 23800],
        method: 'allpass',
        allpassForm: 'second-order',
        targetDb: 50,
      }),
      1900,
    ],
    ['Hilbert FIR, 8 kHz', fir, 700],
  ])('%s compiles and runs in C with the suppression the document predicts', (_, net, toneHz) => {
    const expected = suppressionFromResponse(evaluateBranches(net, toneHz));
    const got = runHeaderHarness(net, toneHz);
    expect(Math.abs(got - expected)).toBeLessThan(0.1);
  });

  it('fixed-point arrays hold the codes quantizeCoefficient rounds to, and the comment states the contract', () => {
    const h = networkToCHeader(allpass, { name: 'ssb' });
    expect(h).toMatch(/Q lags I by 90 degrees/);
    expect(h).toMatch(/UPPER sideband/);
    expect(h).toMatch(/#define SSB_SAMPLE_RATE_HZ 48000/);
    expect(h).toMatch(/predicted worst opposite-sideband suppression over the band: \d+\.\d\d dB/);
    if (allpass.kind !== 'allpass') throw new Error('expected all-pass');
    const q15 = h
      .match(/ssb_i_a_q15\[\d+\] = \{([^}]*)\}/)![1]!
      .split(',')
      .map((s) => s.trim())
      .filter(Boolean)
      .map(Number);
    expect(q15).toEqual(
      allpass.branches.i.sections.map((s) => Math.round(quantizeCoefficient(s.a, 'q15') * 32768)),
    );
  });

  it('rejects a name that is not a C identifier', () => {
    expect(() => networkToCHeader(allpass, { name: '9bad-name' })).toThrow(/is not a C identifier/);
  });
});
