// Command line: analyse a WAV capture and print the result.
//   npm run -s analyze -- FILE.wav [--driven L|R|N] [--mains 50|60] [--volts-at-fs V]
//     [--probe-atten X] [--reference-dbfs D] [--stimulus tone|silence|sweep|programme]
//     [--tone-hz F] [--sweep-start-hz F] [--sweep-end-hz F] [--json]
// Exit codes: 0 analysed, 2 invalid input (bad file, bad option), 1 anything unexpected.
import { stat } from 'node:fs/promises';
import { pathToFileURL } from 'node:url';
import {
  AnalyzeOptionsError,
  WavFormatError,
  type AnalysisResult,
  type AnalyzeOptions,
} from '../analysis/index';
import { analyzeFileInThreads } from '../server/worker/channel-threads';

class UsageError extends Error {}

export { readFileChunks } from '../server/worker/file-chunks';

const USAGE =
  'usage: analyze FILE.wav [--driven L|R|N] [--mains 50|60] [--volts-at-fs V] [--probe-atten X] ' +
  '[--reference-dbfs D] [--stimulus tone|silence|sweep|programme] [--tone-hz F] [--sweep-start-hz F] [--sweep-end-hz F] [--json]';

function numberArg(flag: string, value: string | undefined): number {
  const n = Number(value);
  if (value === undefined || value.trim() === '' || !Number.isFinite(n)) throw new UsageError(`${flag} needs a number, got "${value ?? ''}"`);
  return n;
}

function parseArgs(argv: readonly string[]): { file: string; json: boolean; options: AnalyzeOptions } {
  const options: Record<string, unknown> = {};
  let file: string | null = null;
  let json = false;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    const value = (): string | undefined => argv[++i];
    switch (a) {
      case '--help':
        process.stdout.write(`${USAGE}\n`);
        process.exit(0);
        break;
      case '--json':
        json = true;
        break;
      case '--driven': {
        const v = value();
        const n = v === 'L' || v === 'l' ? 0 : v === 'R' || v === 'r' ? 1 : Number(v);
        if (!Number.isInteger(n)) throw new UsageError(`--driven needs L, R or a 0-based channel number, got "${v ?? ''}"`);
        options.drivenChannel = n;
        break;
      }
      case '--mains':
        options.mainsHz = numberArg(a, value());
        break;
      case '--volts-at-fs':
        options.voltsAtFullScale = numberArg(a, value());
        break;
      case '--probe-atten':
        options.probeAttenuation = numberArg(a, value());
        break;
      case '--reference-dbfs':
        options.referenceDbfs = numberArg(a, value());
        break;
      case '--tone-hz':
        options.toneHz = numberArg(a, value());
        break;
      case '--sweep-start-hz':
        options.sweepStartHz = numberArg(a, value());
        break;
      case '--sweep-end-hz':
        options.sweepEndHz = numberArg(a, value());
        break;
      case '--stimulus':
        options.stimulus = value();
        break;
      default:
        if (a.startsWith('--')) throw new UsageError(`unknown option ${a}`);
        if (file !== null) throw new UsageError(`one file at a time (got "${file}" and "${a}")`);
        file = a;
    }
  }
  if (file === null) throw new UsageError('no input file given');
  // Shape is checked by the engine's schema (analyzeOptionsSchema) when the analysis starts.
  return { file, json, options: options as AnalyzeOptions };
}

const fmt = (v: number | null, unit: string, digits = 2): string => (v === null ? '—' : `${v.toFixed(digits)} ${unit}`);
const pctFmt = (v: number | null): string => (v === null ? '—' : `${v.toPrecision(3)} %`);

function summary(file: string, r: AnalysisResult): string {
  const lines = [
    `${file}: ${r.file.channels} ch, ${r.file.sampleRate} Hz, ${r.file.bitsPerSample}-bit ${r.file.format}, ${r.file.durationS.toFixed(3)} s`,
    `stimulus ${r.stimulus} (${r.stimulusSource}), mains ${r.mainsHz} Hz (${r.mainsSource})`,
  ];
  for (const c of r.channels) {
    lines.push(
      `ch ${c.index}: RMS ${fmt(c.rmsDbfs, 'dBFS')}, peak ${fmt(c.peakDbfs, 'dBFS')}, crest ${fmt(c.crestFactorDb, 'dB')}, DC ${c.dcOffset.toExponential(2)}`,
    );
    if (c.fundamentalHz !== null) {
      lines.push(
        `  tone ${c.fundamentalHz.toFixed(2)} Hz at ${fmt(c.fundamentalDbfs, 'dBFS')}; THD ${pctFmt(c.thdPct)} (${fmt(c.thdDb, 'dB')}); ` +
          `THD+N ${pctFmt(c.thdnPct)} (${fmt(c.thdnDb, 'dB')}); SINAD ${fmt(c.sinadDb, 'dB')}`,
      );
    }
    if (c.noiseDbfs !== null) lines.push(`  noise ${fmt(c.noiseDbfs, 'dBFS')}, ${fmt(c.noiseDbfsA, 'dBFS(A)')}; SNR ${fmt(c.snrDb, 'dB')}`);
    if (c.levelDbv !== null) lines.push(`  level ${fmt(c.levelDbv, 'dBV')} / ${fmt(c.levelDbu, 'dBu')}; noise ${fmt(c.noiseDbu, 'dBu')}`);
    lines.push(`  hum ${fmt(c.humDbfs, 'dBFS')}${c.hum.detected ? ' (present)' : ''}; clicks ${c.clicks.count} (${c.clicks.perMinute.toFixed(1)}/min)`);
  }
  for (const s of r.separation) lines.push(`separation ch ${s.driven} → ch ${s.other}: ${fmt(s.db, 'dB')}${s.noiseLimited ? ' (noise-limited)' : ''}`);
  for (const s of r.sweep?.channels ?? []) {
    lines.push(`sweep ch ${s.channel}: −3 dB at ${fmt(s.lowMinus3dbHz, 'Hz', 1)} and ${fmt(s.highMinus3dbHz, 'Hz', 1)}`);
  }
  for (const w of r.warnings) lines.push(`warning: ${w}`);
  return lines.join('\n');
}

async function main(): Promise<number> {
  let file = '';
  try {
    const args = parseArgs(process.argv.slice(2));
    file = args.file;
    const st = await stat(file);
    if (!st.isFile()) throw new UsageError(`${file} is not a file`);
    // Long captures of two or more channels are measured across the machine's cores.
    const result = await analyzeFileInThreads(file, args.options);
    process.stdout.write(args.json ? `${JSON.stringify(result)}\n` : `${summary(file, result)}\n`);
    return 0;
  } catch (e) {
    const known = e instanceof WavFormatError || e instanceof AnalyzeOptionsError || e instanceof UsageError;
    const sysError = e instanceof Error && 'code' in e && typeof (e as NodeJS.ErrnoException).syscall === 'string';
    if (known || sysError) {
      const where = file ? `${file}: ` : '';
      const code = e instanceof WavFormatError ? ` [${e.code}]` : '';
      process.stderr.write(`analyze: ${where}${(e as Error).message.split('\n')[0]}${code}\n`);
      return 2;
    }
    process.stderr.write(`analyze: unexpected failure: ${e instanceof Error ? e.stack ?? e.message : String(e)}\n`);
    return 1;
  }
}

// Run only as a command, not when bench.ts imports readFileChunks.
if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) process.exitCode = await main();
