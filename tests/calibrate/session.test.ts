// The session driver (src/calibrate/session.ts): abort, time-out, failures, commands, the trim
// applier, and the history in the trims in force. Readings come from the analytic exciter of
// tests/calibrate/analytic-exciter.ts (IRR formula, K. Schmidt, QEX Aug 1994 §2).
import { describe, expect, it } from 'vitest';
import { calibrateCarrier } from '../../src/calibrate/carrier.js';
import { calibrateSidebandAndCarrier, createCombinedSeeker } from '../../src/calibrate/combined.js';
import {
  liveGuard,
  type ReadingSource,
  runSession,
  type SessionCommand,
  type TrimApplier,
} from '../../src/calibrate/session.js';
import { calibrateSideband, sidebandAxes } from '../../src/calibrate/sideband.js';
import { createTrimSeeker, seekerFor } from '../../src/calibrate/trim-calibration.js';
import { createRng } from '../../src/core/rng.js';
import type { Trims } from '../../src/core/trims.js';
import { createCaptureSource, createGeneratorApplier } from '../../src/webaudio/trim-reader.js';
import { analyzer, drawAnalyticDevice } from './analytic-exciter.js';

const never = () => new Promise<never>(() => {});

describe('runSession', () => {
  it('calibrateSidebandAndCarrier honours its AbortSignal while measure never settles (issue 9 bug)', async () => {
    const ctl = new AbortController();
    let calls = 0;
    const run = calibrateSidebandAndCarrier({
      measure: () => {
        calls++;
        return never();
      },
      signal: ctl.signal,
    });
    setTimeout(() => ctl.abort(), 20);
    const t0 = Date.now();
    const r = await Promise.race([
      run,
      new Promise<'pending'>((res) => setTimeout(() => res('pending'), 2000)),
    ]);
    expect(r).not.toBe('pending');
    expect(Date.now() - t0).toBeLessThan(1500);
    if (r === 'pending') return;
    expect(calls).toBe(1);
    expect(r.sideband.stopReason).toBe('aborted');
    expect(Object.values(r.trims).every(Number.isFinite)).toBe(true);
  });
  it('a reading that outlasts timeoutSeconds fails; three in a row end the run with measurement-failed', async () => {
    const { seeker, start } = seekerFor({ measure: () => 0 }, sidebandAxes());
    const ts = createTrimSeeker(seeker, sidebandAxes(), start);
    const aborted: boolean[] = [];
    const source: ReadingSource<number> = {
      read: (_t, ctx) =>
        new Promise<number>((_res, rej) => {
          ctx.signal.addEventListener('abort', () => {
            aborted.push(true);
            rej(ctx.signal.reason);
          });
        }),
    };
    const failures: string[] = [];
    const r = await runSession(ts, source, {
      timeoutSeconds: 0.02,
      onFailure: (e) => failures.push((e as Error).message),
    });
    expect(r.stopReason).toBe('measurement-failed');
    expect(r.cutShort).toBe('failed');
    expect(failures).toHaveLength(3);
    expect(failures[0]).toMatch(/longer than 0.02 s: raise the time-out/);
    // The source saw its signal fire each time (so it can kill what it started).
    expect(aborted).toHaveLength(3);
  });
  it('keeps the history in the trims the applier confirmed, and tells the seeker those', async () => {
    const dev = drawAnalyticDevice(createRng(3));
    const an = analyzer(dev, { seed: 4 });
    // Hardware that rounds the phase to 0.05° and the gain to 0.01 dB.
    const applied: Trims[] = [];
    const applier: TrimApplier = {
      apply: (t) => {
        const a = {
          ...t,
          gainDb: Math.round(t.gainDb / 0.01) * 0.01,
          phaseDeg: Math.round(t.phaseDeg / 0.05) * 0.05,
        };
        applied.push(a);
        return a;
      },
    };
    const seen: Trims[] = [];
    const { seeker, start } = seekerFor({ measure: () => 0, maxReadings: 12 }, sidebandAxes());
    const ts = createTrimSeeker(seeker, sidebandAxes(), start);
    const r = await runSession(
      ts,
      {
        read: (t) => {
          seen.push(t);
          return an.sideband(t);
        },
      },
      { applier },
    );
    expect(r.history.map((h) => h.trims)).toEqual(applied);
    expect(seen).toEqual(applied);
  });
  it('retry asks again, undo drops the last reading, stop keeps the best and says why', async () => {
    const dev = drawAnalyticDevice(createRng(5));
    const an = analyzer(dev, { seed: 6 });
    const script: (SessionCommand | 'read')[] = [
      'read',
      'read',
      { command: 'retry' },
      'read',
      { command: 'undo' },
      'read',
      'read',
      { command: 'stop', why: 'end-of-input' },
    ];
    const { seeker, start } = seekerFor({ measure: () => 0 }, sidebandAxes());
    const ts = createTrimSeeker(seeker, sidebandAxes(), start);
    let k = 0;
    const undone: number[] = [];
    const r = await runSession(
      ts,
      {
        read: (t) => {
          const s = script[k++]!;
          return s === 'read' ? an.sideband(t) : s;
        },
      },
      { onUndo: (d) => undone.push(d?.index ?? -1) },
    );
    expect(undone).toEqual([3]);
    expect(r.history.map((h) => h.index)).toEqual([1, 2, 3, 4]);
    expect(ts.count).toBe(4);
    expect(r.cutShort).toBe('end-of-input');
    expect(r.stopReason).toBe('aborted');
  });
  it('a guard that refuses stops the session with its message', async () => {
    const { seeker, start } = seekerFor({ measure: () => 0 }, sidebandAxes());
    const ts = createTrimSeeker(seeker, sidebandAxes(), start);
    const r = await runSession(ts, {
      read: () => 5.6,
      check: (db) => (db > 0 ? 'the wanted tone is missing: check the receiver' : undefined),
    });
    expect(r.cutShort).toBe('refused');
    expect(r.refusal).toMatch(/wanted tone is missing/);
    expect(r.history).toHaveLength(1);
  });
  it('save and restore continue a seeker where it stopped (each kind)', async () => {
    const dev = drawAnalyticDevice(createRng(8));
    const an = analyzer(dev, { seed: 9 });
    const a = await calibrateSideband({ measure: (t) => an.sideband(t), maxReadings: 6 });
    const b = await calibrateSideband({ measure: (t) => an.sideband(t), maxReadings: 14, resume: a.state });
    expect(b.readings).toBeGreaterThan(6);
    expect(b.history.slice(0, 6).map((h) => h.levelDb)).toEqual(a.history.map((h) => h.levelDb));
    const c1 = createCombinedSeeker({ maxReadings: 16 });
    for (let i = 0; i < 5; i++) {
      const t = c1.next()!;
      c1.tell(t, { sidebandDb: an.sideband(t), carrierDb: an.carrier(t) });
    }
    const c2 = createCombinedSeeker({ maxReadings: 16 });
    c2.restore(JSON.parse(JSON.stringify(c1.save())));
    expect(c2.count).toBe(5);
    expect(c2.next()).toEqual(c1.next());
    expect(() => c2.restore({ format: 'x' })).toThrow(/not a combined/);
    const car = await calibrateCarrier({ measure: (t) => an.carrier(t), maxReadings: 5 });
    expect(car.readings).toBe(5);
  });
  it('live guard: no receiver signal stops at the first reading with a message, trims kept at the start (issue 9)', async () => {
    // The page's failure: with no receiver signal it read +5.6 dBc and drove the trims far off.
    for (const [levels, msg] of [
      [{ sidebandDb: 5.6, carrierDb: 3, wantedDbfs: -95 }, /wanted tone reads -95.0 dBFS, below -60 dBFS/],
      [
        { sidebandDb: 5.6, carrierDb: 3, wantedDbfs: -20 },
        /unwanted sideband reads 5.6 dB above the wanted tone/,
      ],
      [
        { sidebandDb: Number.NaN, carrierDb: -30, wantedDbfs: -20 },
        /gave no level .*check that the receiver audio/,
      ],
    ] as const) {
      let calls = 0;
      const r = await calibrateSidebandAndCarrier({
        measure: () => {
          calls++;
          return levels;
        },
        start: { gainDb: 0.2, phaseDeg: 1 },
        check: liveGuard(-60),
      });
      expect(calls).toBe(1);
      expect(r.refusal).toMatch(msg);
      expect(r.trims.gainDb).toBe(0.2);
      expect(r.trims.phaseDeg).toBe(1);
    }
  });
  it('hardware bounds hold every setting of a live run inside the range the user gave', async () => {
    const dev = drawAnalyticDevice(createRng(12));
    const an = analyzer(dev, { seed: 13 });
    const seen: Trims[] = [];
    await calibrateSidebandAndCarrier({
      measure: (t) => {
        seen.push(t);
        return { sidebandDb: an.sideband(t), carrierDb: an.carrier(t) };
      },
      bounds: { gainDb: [-0.5, 0.5], phaseDeg: [-2, 2], dcI: [-0.02, 0.02], dcQ: [-0.02, 0.02] },
    });
    for (const t of seen) {
      expect(Math.abs(t.gainDb)).toBeLessThanOrEqual(0.5 + 1e-9);
      expect(Math.abs(t.phaseDeg)).toBeLessThanOrEqual(2 + 1e-9);
      expect(Math.abs(t.dcI)).toBeLessThanOrEqual(0.02 + 1e-12);
      expect(Math.abs(t.dcQ)).toBeLessThanOrEqual(0.02 + 1e-12);
    }
  });
});

describe('Web Audio capture as a reading source', () => {
  it('drives a session: the applier sets the trims, the capture is read after the settle frames, and the guard sees NaN', async () => {
    const set: Trims[] = [];
    const node = { setTrims: (t: Partial<Trims>) => set.push({ ...(t as Trims) }) };
    const skips: number[] = [];
    let n = 0;
    const capture = {
      capture: (frames: number, o?: { skipFrames?: number }) => {
        skips.push(o?.skipFrames ?? -1);
        return Promise.resolve({ channels: [new Float32Array(frames)], sampleRate: 48000, startFrame: 0 });
      },
    };
    const source = createCaptureSource<number>({
      capture: capture as never,
      sampleRate: 48000,
      read: () => (++n < 4 ? -40 + n : Number.NaN),
      settleSeconds: 0.05,
      captureSeconds: 0.01,
      check: (db) => (Number.isFinite(db) ? undefined : 'no level: check the receiver'),
    });
    const { seeker, start } = seekerFor({ measure: () => 0 }, sidebandAxes());
    const ts = createTrimSeeker(seeker, sidebandAxes(), start);
    const r = await runSession(ts, source, { applier: createGeneratorApplier(node) });
    expect(skips.every((s) => s === 2400)).toBe(true);
    expect(r.history.map((h) => h.trims)).toEqual(set);
    expect(r.cutShort).toBe('refused');
    expect(r.refusal).toMatch(/check the receiver/);
    expect(r.history).toHaveLength(4);
  });
});
