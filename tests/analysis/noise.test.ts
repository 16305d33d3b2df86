import { writeFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { analyzeWavBytes } from '../../analysis/analyze';
import { generateSilence } from '../../analysis/generate';
import { encodeWav } from '../../analysis/wav-encode';
import { db10, soxDir, soxStats, SOX_RMS_TO_DBFS } from './helpers';

const dir = soxDir();
afterAll(() => dir.remove());

const band48k = db10((20000 - 20) / 24000); // white noise in 20 Hz–20 kHz of 0–24 kHz: −0.80 dB

describe('noise floor, unweighted and A-weighted', () => {
  it('TPDF-dithered 16-bit silence: LSB/2 RMS = −93.32 dBFS full band, −94.12 dBFS in band', () => {
    // Our encoder's TPDF dither is two independent uniforms per sample, so white; sox's own
    // dither is spectrally shaped, which would move the in-band share.
    const bytes = encodeWav(generateSilence({ sampleRate: 48000, seconds: 3 }), 48000, 16, { dither: 'tpdf', seed: 4 });
    writeFileSync(dir.path('tpdf.wav'), bytes);
    // REFERENCES.md (computed): TPDF noise = LSB²/12 + 2·LSB²/12 = LSB²/4, RMS = LSB/2 = 2^−16.
    // sox, reading the file independently, confirms the full-band RMS (2-decimal print).
    expect(Math.abs(soxStats(dir.path('tpdf.wav'))[0]!.rmsLevDb - 20 * Math.log10(2 ** -16))).toBeLessThanOrEqual(0.02);
    const r = analyzeWavBytes(bytes);
    expect(r.stimulus).toBe('silence');
    const c = r.channels[0]!;
    // Random spectral estimate over 3 frames × 27 000 bins: σ ≈ 0.025 dB; ±0.08 dB allowed.
    expect(Math.abs(c.noiseDbfs! - (-93.32 + band48k))).toBeLessThan(0.08);
    expect(c.thdPct).toBeNull();
    expect(c.fundamentalHz).toBeNull();
    expect(c.sinadDb).toBeNull();
  });

  it('white noise from sox: in-band level matches sox stats, A-weighted reads 2.05 dB lower', () => {
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('white.wav'), 'synth', '4', 'whitenoise', 'vol', '0.3');
    const st = soxStats(dir.path('white.wav'))[0]!;
    // Loud noise alone would be taken for programme: say it is a no-stimulus capture.
    const c = analyzeWavBytes(dir.read('white.wav'), { stimulus: 'silence' }).channels[0]!;
    // Full-band RMS from sox, less the share outside 20 Hz–20 kHz. Random spectral estimate: ±0.05 dB.
    expect(Math.abs(c.noiseDbfs! - (st.rmsLevDb + SOX_RMS_TO_DBFS + band48k))).toBeLessThan(0.05);
    // REFERENCES.md (computed from IEC 61672-1): band-limited white noise is 2.05 dB lower A-weighted.
    expect(Math.abs(c.noiseDbfs! - c.noiseDbfsA! - 2.05)).toBeLessThan(0.05);
  });

  it('SNR against a given reference, and noise in dBV/dBu with a calibration', () => {
    dir.sox('-n', '-r', '48000', '-b', '24', dir.path('floor.wav'), 'synth', '3', 'whitenoise', 'vol', '0.001');
    const bytes = dir.read('floor.wav');
    const plain = analyzeWavBytes(bytes).channels[0]!;
    // Rated output at −1 dBFS; a full-scale sine is 2 V RMS at the probe (a 10:1 probe, 0.2 V at the converter).
    const r = analyzeWavBytes(bytes, { referenceDbfs: -1, voltsAtFullScale: 0.2, probeAttenuation: 10 });
    const c = r.channels[0]!;
    expect(r.snrReferenceDbfs).toBe(-1);
    expect(c.snrDb!).toBeCloseTo(-1 - plain.noiseDbfs!, 9);
    expect(c.snrDbA!).toBeCloseTo(-1 - plain.noiseDbfsA!, 9);
    // dBV = dBFS + 20·lg(2 V); dBu = dBV + 20·lg(1/0.774597).
    expect(c.noiseDbv!).toBeCloseTo(plain.noiseDbfs! + 20 * Math.log10(2), 9);
    expect(c.noiseDbu!).toBeCloseTo(c.noiseDbv! + 2.2185, 4);
    expect(r.calibration!.dbvAtFullScale).toBeCloseTo(6.0206, 4);
  });
});
