import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { analysisResultSchema } from '../../shared/analysis-result';
import { soxDir } from './helpers';

const dir = soxDir();
afterAll(() => dir.remove());

const ROOT = join(import.meta.dirname, '../..');

function cli(...args: string[]): { status: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, ['--import', 'tsx', join(ROOT, 'scripts/analyze.ts'), ...args], {
    cwd: ROOT,
    encoding: 'utf8',
    timeout: 60_000,
  });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('command line: npm run analyze -- FILE [options] --json', () => {
  it('a sox file with the right channel driven: one JSON object with file, channels and separation', () => {
    dir.sox('-n', '-r', '48000', '-b', '24', '-c', '2', dir.path('r.wav'), 'synth', '2', 'sine', '997', 'vol', '0.5', 'remix', '1v0.001', '1v1');
    const r = cli(dir.path('r.wav'), '--driven', 'R', '--mains', '60', '--volts-at-fs', '1.228', '--json');
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const out = analysisResultSchema.parse(JSON.parse(r.stdout));
    expect(out.file).toMatchObject({ sampleRate: 48000, bitsPerSample: 24, channels: 2, frames: 96000, durationS: 2 });
    expect(out).toMatchObject({ drivenChannel: 1, drivenSource: 'given', mainsHz: 60, mainsSource: 'given' });
    // sox remix 1v1 / 1v0.001: 60 dB between the channels.
    expect(out.separation[0]).toMatchObject({ driven: 1, other: 0 });
    expect(out.separation[0]!.db!).toBeCloseTo(60, 1);
    // −6.02 dBFS with 1.228 V at full scale: +4 dBu − 6.02 dB.
    expect(out.channels[1]!.levelDbu!).toBeCloseTo(4 - 6.02, 1);
  });

  it('without --json: a short readable summary', () => {
    const r = cli(join(ROOT, 'samples-synthetic/tone-997hz-harmonics.wav'));
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/THD 1\.12 %/);
  });

  it('invalid input: exit code 2 and one line on stderr naming the problem', () => {
    writeFileSync(dir.path('text.wav'), 'not audio');
    const cases: [string[], RegExp][] = [
      [[dir.path('text.wav'), '--json'], /not a WAV file.*\[not-riff\]/],
      [[dir.path('missing.wav')], /ENOENT|no such file/],
      [[dir.path('text.wav'), '--mains', '55'], /--mains|mains frequency must be 50 or 60/],
      [[], /no input file/],
    ];
    for (const [args, message] of cases) {
      const r = cli(...args);
      expect(r.status, args.join(' ')).toBe(2);
      expect(r.stdout).toBe('');
      expect(r.stderr.trimEnd().split('\n')).toHaveLength(1);
      expect(r.stderr).toMatch(message);
    }
  });
});
