/**
 * Where the products come from: a virtual exciter run sample by sample (the network and the stored
 * trims in front of the modelled analog chain and four-phase mixer, read at the fundamental and at
 * LO harmonics 2…9), or a capture of the real exciter's output at the fundamental, with the mixer's
 * harmonic responses predicted from the ideal four-phase mixer.
 *
 * The four-phase commutating mixer (simulate/response.ts): at LO harmonic n the response is
 * `c_n/c_1 = sin(nπ/4)/(n·sin(π/4))` of the fundamental's, carrying the same sideband for
 * n ≡ 1 (mod 4) and the opposite one for n ≡ 3 (mod 4): −9.54 dB at the 3rd (opposite), −13.98 dB
 * at the 5th (same), −16.90 dB at the 7th (opposite), −19.08 dB at the 9th (same).
 */
import { OrthotoneError } from '../core/errors.js';
import type { Correction, Trims } from '../core/trims.js';
import { requireFinite, requirePositive } from '../core/validate.js';
import type { Network } from '../design/network.js';
import { createQuadratureGenerator } from '../generate/quadrature-generator.js';
import type { IqCapture } from '../measure/signal.js';
import { createToneReader } from '../measure/tones.js';
import { measureTwoTone } from '../measure/two-tone.js';
import { createVirtualExciter } from '../simulate/exciter.js';
import type { ExciterModel } from '../simulate/model.js';
import { mixerHarmonicRatio } from '../simulate/response.js';
import type { EmissionProduct } from './check.js';

/** 10·log10 of the PEP-to-mean ratio of two equal tones, dB (= 10·log10 2). */
const TWO_TONE_PEP_TO_MEAN_DB = 10 * Math.log10(2);
const FLOOR_MARGIN_DB = 3;

/** Options of {@link simulateProducts}. */
export interface SimulateProductsOptions {
  network: Network;
  model: ExciterModel;
  trims: Partial<Trims>;
  correction?: Correction | null;
  sideband: 'upper' | 'lower';
  /** Carrier (LO) frequency, Hz. */
  carrierHz: number;
  /** Single test tone, Hz (audio). */
  toneHz: number;
  /** Two-tone test frequencies, Hz (audio). */
  twoToneHz: [number, number];
  /** Peak level of the single tone (and of each of the two tones, −6 dB below it), dBFS (default −6). */
  levelDbfs?: number;
  /** LO harmonics read besides the fundamental (default 2…9). */
  harmonics?: readonly number[];
  /** Seed of the converter and receiver noise (default 1). */
  seed?: number;
  /** Samples analysed per run (default 32768). */
  samples?: number;
}

/** Runs `input` through the network and trims, then through an exciter at LO harmonic `n`. */
function runChain(
  o: SimulateProductsOptions,
  input: Float32Array,
  harmonic: number,
  skip: number,
): IqCapture {
  const gen = createQuadratureGenerator(o.network, {
    trims: o.trims,
    sideband: o.sideband,
    correction: o.correction ?? null,
    rampSeconds: 0,
  });
  const fs = o.network.sampleRate;
  const i = new Float32Array(input.length);
  const q = new Float32Array(input.length);
  gen.process(input, i, q);
  const ex = createVirtualExciter(o.model, { sampleRate: fs, seed: o.seed ?? 1, harmonic });
  const re = new Float32Array(input.length);
  const im = new Float32Array(input.length);
  ex.process(i, q, re, im);
  return { i: re.subarray(skip), q: im.subarray(skip) };
}

/**
 * Products of a virtual exciter: carrier and opposite sideband at the fundamental and the same-side,
 * opposite-side and carrier responses at each LO harmonic (single tone, levels relative to the
 * tone = PEP = mean power), and the 3rd- and 5th-order two-tone products relative to PEP. Read by
 * FFT from the sample-by-sample simulation ({@link createToneReader}, {@link measureTwoTone}).
 * Harmonic products that stay at the receiver's floor are left out, except the 3rd-harmonic
 * opposite and 5th-harmonic same sideband, always listed.
 * @param o see {@link SimulateProductsOptions}; frequencies in Hz, levels in dBFS.
 * @returns products with RF frequencies (n·carrier ± tone) and levels in dB re PEP.
 * @throws {OrthotoneError} INVALID_ARGUMENT / INVALID_DOCUMENT for a bad network, trims or tone
 *   (a tone outside 0…0.45·fs).
 * Reference: simulate/exciter.ts (the chain); docs/REFERENCES.md §5 (two-tone PEP) and §8 (mixer
 * harmonics at 1/n).
 */
export function simulateProducts(o: SimulateProductsOptions): EmissionProduct[] {
  const fs = o.network.sampleRate;
  const fc = requirePositive('carrierHz', o.carrierHz, 'Hz');
  const f = requirePositive('toneHz', o.toneHz, 'Hz');
  for (const t of [f, ...o.twoToneHz]) {
    if (!(t > 0 && t < 0.45 * fs)) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `test tone ${t} Hz must lie between 0 and ${0.45 * fs} Hz`,
        t,
      );
    }
  }
  const s = o.sideband === 'upper' ? 1 : -1;
  const a = 10 ** (requireFinite('levelDbfs', o.levelDbfs ?? -6) / 20);
  const n = o.samples ?? 32768;
  const skip = 4096;
  const total = n + skip;
  const tone = new Float32Array(total);
  for (let k = 0; k < total; k++) tone[k] = a * Math.cos((2 * Math.PI * f * k) / fs);
  const out: EmissionProduct[] = [];
  const read = (cap: IqCapture) => {
    const r = createToneReader(cap, fs, [s * f, -s * f, 0]);
    return { same: r.read(s * f), opp: r.read(-s * f), dc: r.read(0) };
  };
  const fund = read(runChain(o, tone, 1, skip));
  const ref = fund.same.levelDbfs;
  const prod = (
    name: string,
    kind: EmissionProduct['kind'],
    frequencyHz: number,
    lv: { levelDbfs: number; atFloor: boolean },
    harmonic: number,
  ): EmissionProduct => ({
    name,
    kind,
    frequencyHz,
    levelDbPep: lv.levelDbfs - ref,
    pepToMeanDb: 0,
    source: 'simulated',
    atFloor: lv.atFloor,
    harmonic,
  });
  out.push(prod('carrier', 'carrier', fc, fund.dc, 1));
  out.push(prod('opposite sideband', 'opposite-sideband', fc - s * f, fund.opp, 1));
  for (const h of o.harmonics ?? [2, 3, 4, 5, 6, 7, 8, 9]) {
    const r = read(runChain(o, tone, h, skip));
    const keep = (which: 'same' | 'opp', lv: { atFloor: boolean; aboveFloorDb: number }) =>
      (h === 3 && which === 'opp') ||
      (h === 5 && which === 'same') ||
      (!lv.atFloor && lv.aboveFloorDb > FLOOR_MARGIN_DB);
    if (keep('same', r.same))
      out.push(prod(`LO×${h} same sideband`, 'mixer-harmonic', h * fc + s * f, r.same, h));
    if (keep('opp', r.opp))
      out.push(prod(`LO×${h} opposite sideband`, 'mixer-harmonic', h * fc - s * f, r.opp, h));
    if (!r.dc.atFloor && r.dc.aboveFloorDb > FLOOR_MARGIN_DB)
      out.push(prod(`LO×${h} carrier`, 'mixer-harmonic', h * fc, r.dc, h));
  }
  // Two-tone: each tone 6 dB below the single tone, so the PEP equals the single tone's.
  const [f1, f2] = o.twoToneHz;
  const two = new Float32Array(total);
  for (let k = 0; k < total; k++) {
    two[k] = (a / 2) * (Math.cos((2 * Math.PI * f1 * k) / fs) + Math.cos((2 * Math.PI * f2 * k) / fs));
  }
  out.push(...twoToneProducts(runChain(o, two, 1, skip), fs, fc, [s * f1, s * f2], 'simulated'));
  return out;
}

/**
 * Two-tone products (3rd and 5th order) of an I/Q capture at the fundamental, relative to PEP.
 * @param cap receiver baseband relative to the carrier, full-scale units.
 * @param sampleRate Hz.
 * @param carrierHz RF carrier, Hz (the product's RF frequency is carrier + baseband offset).
 * @param tonesHz the two tones as they appear in the capture (negative for the lower sideband), Hz.
 * @throws {OrthotoneError} as {@link measureTwoTone}.
 * Reference: measure/two-tone.ts (PEP of two tones, Krauss, Bostian & Raab p. 509).
 */
export function twoToneProducts(
  cap: IqCapture,
  sampleRate: number,
  carrierHz: number,
  tonesHz: [number, number],
  source: EmissionProduct['source'],
): EmissionProduct[] {
  const r = measureTwoTone(cap, sampleRate, tonesHz, { maxOrder: 5 });
  const pepToMean = r.pepDbfs - 10 * Math.log10(r.tones[0].amplitude ** 2 + r.tones[1].amplitude ** 2);
  return r.products.map((p) => ({
    name: `IMD${p.order} ${p.side}`,
    kind: 'intermodulation' as const,
    frequencyHz: Math.round((carrierHz + p.frequencyHz) * 1000) / 1000,
    levelDbPep: p.dbPep,
    pepToMeanDb: Number.isFinite(pepToMean) ? pepToMean : TWO_TONE_PEP_TO_MEAN_DB,
    source,
    atFloor: p.reading.atFloor,
  }));
}

/**
 * Products read from a single-tone I/Q capture of the exciter at the fundamental (receiver baseband
 * relative to the carrier): carrier and opposite sideband measured; the mixer's responses at LO
 * harmonics 3, 5, 7, 9 predicted from the ideal four-phase mixer (each measured component times
 * `c_n/c_1`, moved to the side the harmonic carries it to).
 * @param cap the capture, full-scale units.
 * @param sampleRate Hz.
 * @param carrierHz RF carrier, Hz.
 * @param toneHz the test tone, Hz (audio, positive).
 * @param sideband the sideband sent.
 * @throws {OrthotoneError} as {@link createToneReader} (tone beyond Nyquist, capture too short);
 *   INVALID_ARGUMENT when no tone stands above the floor at the wanted frequency, or the opposite
 *   one is stronger (the other sideband was sent).
 * Reference: file header; switching-function Fourier series (simulate/response.ts).
 */
export function captureProducts(
  cap: IqCapture,
  sampleRate: number,
  carrierHz: number,
  toneHz: number,
  sideband: 'upper' | 'lower',
): EmissionProduct[] {
  const s = sideband === 'upper' ? 1 : -1;
  const r = createToneReader(cap, sampleRate, [s * toneHz, -s * toneHz, 0]);
  const w = r.read(s * toneHz);
  const o = r.read(-s * toneHz);
  const c = r.read(0);
  if (w.atFloor) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `no tone stands above the floor at ${s * toneHz} Hz in the capture: give the test tone with --tone (and --sideband)`,
      toneHz,
    );
  }
  if (o.levelDbfs > w.levelDbfs) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `the tone at ${-s * toneHz} Hz is stronger than the wanted one at ${s * toneHz} Hz: is this the ${sideband === 'upper' ? 'lower' : 'upper'} sideband? give --sideband ${sideband === 'upper' ? 'lower' : 'upper'}`,
      toneHz,
    );
  }
  const rel = (x: { levelDbfs: number }) => x.levelDbfs - w.levelDbfs;
  const out: EmissionProduct[] = [
    {
      name: 'carrier',
      kind: 'carrier',
      frequencyHz: carrierHz,
      levelDbPep: rel(c),
      pepToMeanDb: 0,
      source: 'measured',
      atFloor: c.atFloor,
      harmonic: 1,
    },
    {
      name: 'opposite sideband',
      kind: 'opposite-sideband',
      frequencyHz: carrierHz - s * toneHz,
      levelDbPep: rel(o),
      pepToMeanDb: 0,
      source: 'measured',
      atFloor: o.atFloor,
      harmonic: 1,
    },
  ];
  for (const h of [3, 5, 7, 9]) {
    const k = 20 * Math.log10(Math.abs(mixerHarmonicRatio(h)));
    // n ≡ 3 (mod 4) swaps the sidebands, n ≡ 1 (mod 4) keeps them.
    const swap = h % 4 === 3 ? -1 : 1;
    out.push({
      name: `LO×${h} ${swap < 0 ? 'opposite' : 'same'} sideband`,
      kind: 'mixer-harmonic',
      frequencyHz: h * carrierHz + swap * s * toneHz,
      levelDbPep: k,
      pepToMeanDb: 0,
      source: 'predicted',
      harmonic: h,
    });
    out.push({
      name: `LO×${h} ${swap < 0 ? 'same' : 'opposite'} sideband`,
      kind: 'mixer-harmonic',
      frequencyHz: h * carrierHz - swap * s * toneHz,
      levelDbPep: k + rel(o),
      pepToMeanDb: 0,
      source: 'predicted',
      harmonic: h,
    });
    out.push({
      name: `LO×${h} carrier`,
      kind: 'mixer-harmonic',
      frequencyHz: h * carrierHz,
      levelDbPep: k + rel(c),
      pepToMeanDb: 0,
      source: 'predicted',
      harmonic: h,
    });
  }
  return out;
}
