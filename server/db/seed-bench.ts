/**
 * Demo bench work for the seeded shop: signal paths from the templates, a spec sheet for the
 * demo amplifier, and a repair log and audit trail on its job. All figures, part numbers and
 * makers are invented.
 */
import { and, eq, inArray, isNull } from 'drizzle-orm';
import type { DbOrTx } from './client';
import type { DemoExtension } from './seed';
import { biasReadings, jobEvents, jobs, partsUsed, railChecks, specFigures, specSheets, testPoints, units } from './schema/index';
import { SIGNAL_PATH_TEMPLATES } from '../../shared/test-points';
import type { JobStatus } from '../../shared/jobs';
import type { SpecFigureInput } from '../../shared/specs';

const HOUR = 3600_000;
const DEMO_SOURCE = "owner's manual (invented demo figures)";

const SOLACE_FIGURES: SpecFigureInput[] = [
  { metric: 'power_8ohm_w', value: 70, condition: 'per channel, both channels driven, 20 Hz–20 kHz', source: DEMO_SOURCE },
  { metric: 'snr_line_db', value: 98, condition: 'line input, A-weighted, re rated output', source: DEMO_SOURCE },
  { metric: 'separation_1k_db', value: 60, condition: 'line input, 1 kHz', source: DEMO_SOURCE },
  { metric: 'input_crosstalk_1k_db', value: 65, condition: 'between line inputs, 1 kHz', source: DEMO_SOURCE },
  { metric: 'thd_pct', value: 0.05, condition: 'rated power into 8 Ω, 1 kHz', source: DEMO_SOURCE },
  { metric: 'response_low_hz', value: 10, condition: '±1 dB, line input, tone controls flat', source: DEMO_SOURCE },
  { metric: 'response_high_hz', value: 50_000, condition: '±1 dB, line input, tone controls flat', source: DEMO_SOURCE },
  { metric: 'response_tolerance_db', value: 1, condition: '10 Hz–50 kHz', source: DEMO_SOURCE },
];

async function addTestPoints(tx: DbOrTx, shopId: number, jobIds: number[]) {
  const rows = await tx.select({ jobId: jobs.id, kind: units.kind }).from(jobs).innerJoin(units, eq(units.id, jobs.unitId)).where(inArray(jobs.id, jobIds));
  const values = rows.flatMap((r) =>
    SIGNAL_PATH_TEMPLATES[r.kind].map((t, i) => ({ shopId, jobId: r.jobId, position: i + 1, name: t.name, description: t.description })),
  );
  if (values.length) await tx.insert(testPoints).values(values);
}

async function addSpecSheet(tx: DbOrTx, shopId: number) {
  const [sheet] = await tx
    .insert(specSheets)
    .values({ shopId, maker: 'Vellmark', model: 'Solace 70', notes: 'Demo sheet: every figure here is invented.', inputs: ['Phono', 'Disc', 'Tuner', 'Aux', 'Recorder'] })
    .returning({ id: specSheets.id });
  await tx.insert(specFigures).values(SOLACE_FIGURES.map((f) => ({ ...f, shopId, specSheetId: sheet!.id })));
}

async function addRepairLog(tx: DbOrTx, shopId: number, jobId: number, technicianId: number) {
  const by = { shopId, jobId, createdBy: technicianId };
  await tx.insert(partsUsed).values({ ...by, reference: 'IC301', partNumber: 'QS-7318X', description: 'Input selector switch IC (invented part)', quantity: 1, unitCostMinor: 480 });
  await tx.insert(railChecks).values([
    { ...by, rail: '+B main', nominalV: 38, measuredV: 37.4, tolerancePct: 5, note: 'At idle, mains 230 V on the variac.' },
    { ...by, rail: '−B main', nominalV: -38, measuredV: -37.2, tolerancePct: 5, note: 'At idle, mains 230 V on the variac.' },
  ]);
  await tx.insert(biasReadings).values([
    { ...by, channel: 'Left', testPoint: 'TP501 across R531', targetMv: 10, toleranceMv: 2, coldMv: 6.8, warmUpMinutes: 30, warmMv: 9.1, finalMv: 10.2, note: 'Set with VR501.' },
    { ...by, channel: 'Right', testPoint: 'TP601 across R631', targetMv: 10, toleranceMv: 2, coldMv: 7.4, warmUpMinutes: 30, warmMv: 12.6, finalMv: 10.0, note: 'Drifted high when warm; reset with VR601.' },
  ]);
}

type Step = { at: number; userId: number; kind: string; from?: JobStatus; to?: JobStatus; note: string };

/**
 * The base seed writes one intake event per job at the job's current stage; rewrite it as a
 * proper "booked in" and add the moves and notes that led each job to where it stands.
 */
async function addTrail(tx: DbOrTx, shopId: number, jobId: number, bookedAt: number, steps: Step[]) {
  await tx
    .update(jobEvents)
    .set({ toStatus: 'booked_in', at: new Date(bookedAt) })
    .where(and(eq(jobEvents.jobId, jobId), eq(jobEvents.kind, 'status'), isNull(jobEvents.fromStatus)));
  await tx.update(jobs).set({ createdAt: new Date(bookedAt) }).where(eq(jobs.id, jobId));
  if (!steps.length) return;
  await tx.insert(jobEvents).values(
    steps.map((s) => ({ shopId, jobId, userId: s.userId, kind: s.kind, fromStatus: s.from ?? null, toStatus: s.to ?? null, note: s.note, at: new Date(s.at) })),
  );
}

export const benchDemo: DemoExtension = async (tx, ids) => {
  const { shopId } = ids;
  const [amp, receiver, phono] = ids.jobIds as [number, number, number];
  const tech = ids.users.technician;
  const desk = ids.users.front_desk;
  const now = Date.now();

  await addTestPoints(tx, shopId, ids.jobIds);
  await addSpecSheet(tx, shopId);
  await addRepairLog(tx, shopId, amp, tech);

  const ampIn = now - 3 * 24 * HOUR;
  await addTrail(tx, shopId, amp, ampIn, [
    { at: ampIn + 20 * HOUR, userId: tech, kind: 'status', from: 'booked_in', to: 'diagnosis', note: 'On the bench.' },
    { at: ampIn + 26 * HOUR, userId: tech, kind: 'note', note: 'Crackle follows the disc input; the other sources bleed through at the selector output. Selector IC suspected.' },
    { at: ampIn + 27 * HOUR, userId: desk, kind: 'customer_note', note: 'Your amplifier is on the bench; we will send a quote once the fault is pinned down.' },
  ]);
  await addTrail(tx, shopId, receiver, now - 5 * HOUR, []);
  const phonoIn = now - 6 * 24 * HOUR;
  await addTrail(tx, shopId, phono, phonoIn, [
    { at: phonoIn + 4 * HOUR, userId: tech, kind: 'status', from: 'booked_in', to: 'diagnosis', note: '' },
    { at: phonoIn + 24 * HOUR, userId: tech, kind: 'fault_found', note: 'Dry joint on the ground lift link; resoldered.' },
    { at: phonoIn + 25 * HOUR, userId: tech, kind: 'status', from: 'diagnosis', to: 'repair', note: 'Within the pre-approved amount.' },
    { at: phonoIn + 26 * HOUR, userId: tech, kind: 'status', from: 'repair', to: 'soak_test', note: '' },
    { at: phonoIn + 50 * HOUR, userId: tech, kind: 'status', from: 'soak_test', to: 'ready', note: 'Soaked 24 h, hum gone.' },
    { at: phonoIn + 51 * HOUR, userId: desk, kind: 'customer_note', note: 'Ready for collection.' },
  ]);
};
