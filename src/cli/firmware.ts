/**
 * `orthotone firmware NET.json --arithmetic float|q31|q15 --out DIR`: writes a self-contained C99
 * kit (kernels, trims, host helper, host-check, Makefile, generated tables and README) for a network.
 */
import { existsSync, mkdirSync, readdirSync, readFileSync, renameSync, rmSync, statSync } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { cautionsText } from '../core/cautions.js';
import { KIT_ARITHMETICS, type KitArithmetic } from '../design/kit-arithmetic.js';
import { FIRMWARE_SOURCE_FILES, firmwareKitFiles } from '../export/firmware-kit.js';
import { parseNetworkJson } from '../export/network-json.js';
import { parseProfileJson } from '../export/profile-json.js';
import { assertDistinctFiles, temporaryPathFor, writeFileAtomic } from '../node/files.js';
import { choiceOpt, numberOpt, parseCommand, UsageError } from './args.js';

const HELP = `usage: orthotone firmware NET.json --arithmetic A --out DIR [options]

Writes a C99 firmware kit for a network: the all-pass or Hilbert FIR kernels and the trim stage in
one arithmetic, a host helper, host-check, a Makefile and a README (word lengths, headroom, memory,
operations per sample). Build and check it with: make -C DIR && DIR/host-check < samples.txt

options:
  --arithmetic A     float | q31 | q15 (16-bit samples and coefficients, 32-bit states)
  --out DIR          the kit folder (created, or its files replaced)
  --profile P.json   a calibration profile: its trims become the kit's start-up trims
  --name PREFIX      prefix of the generated table symbols, a C identifier (default ortho)
  --max-skew N       skew stage for |skew| up to N whole samples (0-16, default 0: no skew stage)
  -h, --help         this help
`;

/**
 * The folder holding the kit's C sources: `firmware/` beside `dist/` (built) or `src/` (sources).
 * @throws {Error} when the package has no `firmware/` folder (an incomplete install, a bug).
 */
export function firmwareSourceDir(): string {
  const here = dirname(fileURLToPath(import.meta.url));
  for (const up of ['..', join('..', '..')]) {
    const dir = resolve(here, up, 'firmware');
    if (existsSync(join(dir, 'ortho_kit.h'))) return dir;
  }
  throw new Error(`firmware sources not found near ${here}: the package is incomplete`);
}

/**
 * Writes the kit into `out`: into a new temporary folder renamed into place when `out` does not
 * exist, else file by file, each atomically.
 */
function writeKit(out: string, files: Record<string, string>): void {
  if (existsSync(out)) {
    if (!statSync(out).isDirectory())
      throw new UsageError(`--out ${out} is a file: give a folder for the kit`);
    for (const [name, text] of Object.entries(files)) writeFileAtomic(join(out, name), text);
    return;
  }
  const tmp = temporaryPathFor(out);
  mkdirSync(tmp);
  try {
    for (const [name, text] of Object.entries(files)) writeFileAtomic(join(tmp, name), text);
    renameSync(tmp, out);
  } catch (e) {
    rmSync(tmp, { recursive: true, force: true });
    throw e;
  }
}

/**
 * Runs `orthotone firmware`.
 * @param argv the command's arguments.
 * @returns exit status (0 ok, 2 usage).
 * @throws never for user errors (exit 2 through runGuarded).
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v, positionals } = parseCommand(
    argv,
    {
      arithmetic: { type: 'string' },
      out: { type: 'string' },
      profile: { type: 'string' },
      name: { type: 'string' },
      'max-skew': { type: 'string' },
      help: { type: 'boolean', short: 'h' },
    },
    true,
  );
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  if (positionals.length !== 1)
    throw new UsageError('give one network file: orthotone firmware NET.json --arithmetic q15 --out DIR');
  if (v.arithmetic === undefined) throw new UsageError('--arithmetic is required: float, q31 or q15');
  const arithmetic = choiceOpt('arithmetic', v.arithmetic, KIT_ARITHMETICS, 'q15') as KitArithmetic;
  if (typeof v.out !== 'string' || v.out === '')
    throw new UsageError('--out DIR is required: the folder to write the kit into');
  const out = v.out;
  const maxSkew = numberOpt('max-skew', v['max-skew']) ?? 0;
  const netPath = positionals[0]!;
  const profilePath = typeof v.profile === 'string' ? v.profile : undefined;
  const sourceDir = firmwareSourceDir();
  const names = [
    ...FIRMWARE_SOURCE_FILES,
    'ortho_config.h',
    'ortho_coeffs.c',
    'ortho_sections.c',
    'README.md',
  ];
  assertDistinctFiles(
    [
      ['NET.json', netPath],
      ['--profile', profilePath],
    ],
    names.map((n) => [`--out ${basename(out)}/${n}`, join(out, n)] as const),
  );
  const net = parseNetworkJson(readFileSync(netPath, 'utf8'));
  const profile = profilePath ? parseProfileJson(readFileSync(profilePath, 'utf8')) : null;
  const kit = firmwareKitFiles(net, {
    arithmetic,
    maxSkew,
    profile,
    ...(typeof v.name === 'string' ? { name: v.name } : {}),
  });
  const files: Record<string, string> = {};
  for (const f of FIRMWARE_SOURCE_FILES) files[f] = readFileSync(join(sourceDir, f), 'utf8');
  Object.assign(files, kit.files);
  // Further programs' sources (added beside the kernel by other parts of the kit, e.g. a device
  // link's protocol parser) travel with it: every .c/.h/.mk in firmware/ is copied.
  for (const f of readdirSync(sourceDir)) {
    if (/\.(c|h|mk)$/.test(f) && files[f] === undefined) files[f] = readFileSync(join(sourceDir, f), 'utf8');
  }
  writeKit(out, files);
  const a = kit.analysis;
  process.stdout.write(
    `wrote ${out}: ${arithmetic} kit, ${net.kind}, image rejection ${a.imageRejectionDb.toFixed(1)} dB, ` +
      `noise floor ${a.noiseFloorDbfs.toFixed(1)} dBFS, headroom ${a.headroomBits} bits, ` +
      `about ${a.cyclesPerSampleEstimate} cycles per sample; build with: make -C ${out}\n`,
  );
  process.stdout.write(`\n${cautionsText()}\n`);
  return 0;
}
