/**
 * measureSideband's ways of finding the unwanted tone and the carrier when one of them is missing:
 * a balanced exciter (no opposite sideband) with its carrier suppressed, and a wanted tone that a
 * generous search finds far from where it was asked. The suppression of a perfectly balanced I/Q pair
 * is unbounded (K. Schmidt, QEX Aug 1994 §2: IRR → ∞ at g = 1, φ = 0); what it reads is the
 * leakage of the wanted tone, below the Blackman–Harris sidelobes (−92.0 dB, Heinzel, Rüdiger &
 * Schilling 2002).
 */
import { describe, expect, it } from 'vitest';
import { measureSideband } from '../../src/measure/sideband.js';

const fs = 48000;

describe('measureSideband without a carrier or an opposite sideband', () => {
  it('I/Q: the unwanted tone is read at the mirror of the measured wanted tone about the nominal carrier', () => {
    const len = 8192;
    const hz = 1000.3;
    const i = Float64Array.from({ length: len }, (_, n) => 0.5 * Math.cos((2 * Math.PI * hz * n) / fs + 0.2));
    const q = Float64Array.from({ length: len }, (_, n) => 0.5 * Math.sin((2 * Math.PI * hz * n) / fs + 0.2));
    const r = measureSideband(i, q, fs, { toneHz: 1000 });
    expect(r.wanted.frequencyHz).toBeCloseTo(hz, 2);
    expect(r.unwanted.refined).toBe(false);
    expect(r.unwanted.frequencyHz).toBeCloseTo(-hz, 2);
    expect(r.carrier.refined).toBe(false);
    expect(r.carrier.frequencyHz).toBe(0);
    expect(r.sidebandSuppressionDb).toBeGreaterThan(92);
    expect(r.carrierSuppressionDb).toBeGreaterThan(92);
  });
  it('receiver audio: a wanted tone found far off puts the mirror below 0 Hz; the nominal place is read instead', () => {
    // Upper-sideband receiver 1500 Hz below the carrier, a 1400 Hz tone: wanted at 2900 Hz, unwanted
    // at 100 Hz. The tone actually arrives at 3050 Hz (150 Hz off), found with searchHz 200; its mirror
    // about the carrier, 2·1500 − 3050 = −50 Hz, is outside the audio, so the unwanted tone is read at 100 Hz.
    const len = 8192;
    const x = Float64Array.from({ length: len }, (_, n) => 0.5 * Math.sin((2 * Math.PI * 3050 * n) / fs));
    const r = measureSideband(x, null, fs, { toneHz: 1400, offsetHz: 1500, searchHz: 200 });
    expect(r.wanted.frequencyHz).toBeCloseTo(3050, 1);
    expect(r.frequencyErrorHz).toBeCloseTo(150, 1);
    expect(r.unwanted.frequencyHz).toBe(100);
    expect(r.unwanted.refined).toBe(false);
    expect(r.sidebandSuppressionDb).toBeGreaterThan(92);
  });
  it('receiver audio with a carrier: the unwanted tone is the mirror about the measured carrier', () => {
    // Upper-sideband receiver 1500 Hz below the carrier, a 700 Hz tone: carrier at 1500.4 Hz (tuning
    // 0.4 Hz off), wanted at 2200.4 Hz, unwanted (−40 dBc) at 800.4 Hz.
    const len = 8192;
    const x = Float64Array.from({ length: len }, (_, n) => {
      const t = n / fs;
      return (
        0.5 * Math.sin(2 * Math.PI * 2200.4 * t) +
        0.005 * Math.sin(2 * Math.PI * 800.4 * t + 1) +
        0.0025 * Math.sin(2 * Math.PI * 1500.4 * t + 2)
      );
    });
    const r = measureSideband(x, null, fs, { toneHz: 700, offsetHz: 1500 });
    expect(r.carrier.refined).toBe(true);
    expect(r.carrier.frequencyHz).toBeCloseTo(1500.4, 1);
    expect(r.unwanted.frequencyHz).toBeCloseTo(800.4, 1);
    expect(r.sidebandSuppressionDb).toBeCloseTo(40, 1);
    expect(r.carrierSuppressionDb).toBeCloseTo(20 * Math.log10(0.5 / 0.0025), 1);
  });
});
