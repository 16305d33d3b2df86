/**
 * Demo captures on the demo amplifier job: the synthetic WAVs from samples-synthetic/ stored as a
 * technician would upload them — clean at the input socket, crackle and poor separation at the
 * selector output before the repair, clean there after it, the input crosstalk test there (tuner
 * driven, selector stepped through the other inputs) before and after, and the residual noise at
 * the speaker terminals after it (for the SNR check). They are left 'queued': the analysis
 * worker finds queued captures without a job when it starts, so a new user sees results at once.
 */
import { createHash, randomBytes } from 'node:crypto';
import { mkdir, readFile, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { and, asc, eq } from 'drizzle-orm';
import { readWavInfo } from '../../analysis/wav-header';
import { SIGNAL_PATH_TEMPLATES } from '../../shared/test-points';
import type { DbOrTx } from './client';
import type { DemoExtension } from './seed';
import { calibrationProfiles, captures, testPoints } from './schema/index';
import { removeQuietly, storeContentAddressed } from '../services/capture-storage';
import type { FileStore } from '../storage/file-store';

const SAMPLES = fileURLToPath(new URL('../../samples-synthetic/', import.meta.url));
const HOUR = 3600_000;

interface DemoCapture {
  file: string;
  /** Position of the test point in the integrated-amplifier signal path template. */
  position: number;
  phase: 'before' | 'after';
  hoursAgo: number;
  notes: string;
  stimulus: 'tone' | 'silence';
  drivenChannel: number | null;
  /** Which demo calibration profile: the ×1 line-level probe or the ×10 probe for the speaker terminals. */
  calibration: 'line' | 'speaker';
  loadOhms: number | null;
  /** Input tags, in the demo unit's spelling; null for a capture without them. */
  selectedInput?: string;
  drivenInput?: string;
}

const TONE = { stimulus: 'tone', drivenChannel: 0, calibration: 'line', loadOhms: null } as const;

export const DEMO_CAPTURES: readonly DemoCapture[] = [
  { file: 'demo-before-input-socket.wav', position: 1, phase: 'before', hoursAgo: 46, notes: 'Disc input, 1 kHz tone in the left channel, volume at minimum.', ...TONE },
  { file: 'demo-before-selector-out.wav', position: 2, phase: 'before', hoursAgo: 45, notes: 'Same tone, probe on the selector IC output pins. Crackle audible on the tracer.', ...TONE },
  { file: 'demo-after-selector-out.wav', position: 2, phase: 'after', hoursAgo: 2, notes: 'After replacing IC301, same set-up as before.', ...TONE },
  // Input crosstalk at the selector output: tuner driven, the selector stepped through tuner, disc and aux.
  ...(['before', 'after'] as const).flatMap((phase) =>
    (['Tuner', 'Disc', 'Aux'] as const).map((selected, i) => ({
      file: `demo-crosstalk-${phase}-${selected.toLowerCase()}-selected.wav`,
      position: 2,
      phase,
      // Taken just before the ordinary capture at the same point, which stays the stage's latest.
      hoursAgo: (phase === 'before' ? 45.5 : 2.5) - i * 0.05,
      notes:
        selected === 'Tuner'
          ? 'Crosstalk test: 1 kHz into the tuner input, both channels, selector on tuner for the reference level.'
          : `Crosstalk test: same tone into the tuner input, selector on ${selected.toLowerCase()}; listening for the tuner bleeding through.`,
      stimulus: 'tone' as const,
      drivenChannel: null,
      calibration: 'line' as const,
      loadOhms: null,
      selectedInput: selected,
      drivenInput: 'Tuner',
    })),
  ),
  {
    file: 'silence-noise-floor.wav',
    position: 5,
    phase: 'after',
    hoursAgo: 1,
    notes: 'Residual noise across the 8 Ω dummy load, line input shorted, volume at minimum: the SNR check.',
    stimulus: 'silence',
    drivenChannel: null,
    calibration: 'speaker',
    loadOhms: 8,
  },
];

/** Test points of the demo job at the template positions; made from the template if missing. */
async function demoTestPoints(tx: DbOrTx, shopId: number, jobId: number): Promise<Map<number, number>> {
  let rows = await tx
    .select({ id: testPoints.id, position: testPoints.position })
    .from(testPoints)
    .where(and(eq(testPoints.shopId, shopId), eq(testPoints.jobId, jobId)))
    .orderBy(asc(testPoints.position));
  if (rows.length === 0) {
    const template = SIGNAL_PATH_TEMPLATES.integrated_amplifier;
    rows = await tx
      .insert(testPoints)
      .values(template.map((t, i) => ({ shopId, jobId, position: i + 1, name: t.name, description: t.description })))
      .returning({ id: testPoints.id, position: testPoints.position });
  }
  return new Map(rows.map((r) => [r.position, r.id]));
}

async function storeSample(store: FileStore, name: string) {
  const bytes = await readFile(join(SAMPLES, name));
  const info = readWavInfo(bytes, { fileSize: bytes.length });
  const sha256 = createHash('sha256').update(bytes).digest('hex');
  await mkdir(store.scratchDir, { recursive: true });
  const temp = join(store.scratchDir, `seed-${randomBytes(8).toString('hex')}.part`);
  await writeFile(temp, bytes);
  try {
    await storeContentAddressed(store, temp, sha256);
  } finally {
    await removeQuietly(temp);
  }
  return { bytes, info, sha256 };
}

/** The demo extension, given where this install keeps its files. */
export function seedCaptures(store: FileStore): DemoExtension {
  return async (tx, ids) => {
    const { shopId } = ids;
    const jobId = ids.jobIds[0]!;
    const points = await demoTestPoints(tx, shopId, jobId);
    const [line, speaker] = await tx
      .insert(calibrationProfiles)
      .values([
        {
          shopId,
          name: 'Bench interface, line in, ×1 probe',
          voltsAtFullScale: 1.55,
          probeAttenuation: 1,
          notes: 'Checked against the bench meter with a 1 kHz sine (demo figures).',
          createdBy: ids.users.technician,
        },
        {
          shopId,
          name: 'Bench interface, line in, ×10 probe (speaker terminals)',
          voltsAtFullScale: 1.55,
          probeAttenuation: 10,
          notes: 'The ×1 profile through the 10:1 probe; checked at 10 V RMS on the bench meter (demo figures).',
          createdBy: ids.users.technician,
        },
      ])
      .returning({ id: calibrationProfiles.id });
    const calibrationIds = { line: line!.id, speaker: speaker!.id };
    const now = Date.now();
    for (const demo of DEMO_CAPTURES) {
      const { bytes, info, sha256 } = await storeSample(store, demo.file);
      await tx.insert(captures).values({
        shopId,
        jobId,
        testPointId: points.get(demo.position) ?? null,
        phase: demo.phase,
        stimulus: demo.stimulus,
        drivenChannel: demo.drivenChannel,
        selectedInput: demo.selectedInput ?? null,
        drivenInput: demo.drivenInput ?? null,
        calibrationId: calibrationIds[demo.calibration],
        loadOhms: demo.loadOhms,
        originalName: demo.file,
        sha256,
        sizeBytes: bytes.length,
        sampleRate: info.sampleRate,
        channels: info.channels,
        bitsPerSample: info.bitsPerSample,
        durationS: info.durationS,
        state: 'queued',
        notes: demo.notes,
        uploadedBy: ids.users.technician,
        createdAt: new Date(now - demo.hoursAgo * HOUR),
      });
    }
  };
}
