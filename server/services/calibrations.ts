import { and, asc, eq, sql } from 'drizzle-orm';
import { dbvAtFullScale, type Calibration, type CalibrationInput } from '../../shared/calibrations';
import type { DbOrTx } from '../db/client';
import { calibrationProfiles, captures } from '../db/schema/index';
import { conflict, notFound } from '../http-error';

// Spelled out: inside a select list Drizzle renders columns unqualified, and a bare "id" in the
// subquery would bind to captures.id.
const captureCount = sql<number>`(select count(*)::int from ${captures} c where c.calibration_id = ${sql.raw('"calibration_profiles"."id"')})`;

const columns = {
  id: calibrationProfiles.id,
  name: calibrationProfiles.name,
  voltsAtFullScale: calibrationProfiles.voltsAtFullScale,
  probeAttenuation: calibrationProfiles.probeAttenuation,
  notes: calibrationProfiles.notes,
  createdAt: calibrationProfiles.createdAt,
  captureCount,
};

const selectAll = (db: DbOrTx) => db.select(columns).from(calibrationProfiles);
type Row = Awaited<ReturnType<typeof selectAll>>[number];

function toCalibration(r: Row): Calibration {
  return { ...r, createdAt: r.createdAt.toISOString(), dbvAtFullScale: dbvAtFullScale(r.voltsAtFullScale, r.probeAttenuation) };
}

export async function listCalibrations(db: DbOrTx, shopId: number): Promise<Calibration[]> {
  const rows = await selectAll(db).where(eq(calibrationProfiles.shopId, shopId)).orderBy(asc(calibrationProfiles.name), asc(calibrationProfiles.id));
  return rows.map(toCalibration);
}

export async function getCalibration(db: DbOrTx, shopId: number, id: number): Promise<Calibration> {
  const [row] = await selectAll(db).where(and(eq(calibrationProfiles.shopId, shopId), eq(calibrationProfiles.id, id)));
  if (!row) throw notFound('Calibration profile');
  return toCalibration(row);
}

export async function createCalibration(db: DbOrTx, shopId: number, userId: number, input: CalibrationInput): Promise<Calibration> {
  const [row] = await db.insert(calibrationProfiles).values({ shopId, createdBy: userId, ...input }).returning({ id: calibrationProfiles.id });
  return getCalibration(db, shopId, row!.id);
}

/**
 * Edits a profile. Captures already measured with it keep their figures until measured again,
 * so changing the volts of a profile in use is refused: make a new profile instead.
 */
export async function updateCalibration(db: DbOrTx, shopId: number, id: number, input: CalibrationInput): Promise<Calibration> {
  const current = await getCalibration(db, shopId, id);
  const scaleChanged = current.voltsAtFullScale !== input.voltsAtFullScale || current.probeAttenuation !== input.probeAttenuation;
  if (scaleChanged && current.captureCount > 0) {
    throw conflict(`This profile calibrates ${current.captureCount} capture(s); add a new profile for the new figures instead`);
  }
  await db.update(calibrationProfiles).set(input).where(and(eq(calibrationProfiles.shopId, shopId), eq(calibrationProfiles.id, id)));
  return getCalibration(db, shopId, id);
}

export async function deleteCalibration(db: DbOrTx, shopId: number, id: number): Promise<void> {
  const current = await getCalibration(db, shopId, id);
  if (current.captureCount > 0) throw conflict(`This profile calibrates ${current.captureCount} capture(s) and is kept as their evidence`);
  await db.delete(calibrationProfiles).where(and(eq(calibrationProfiles.shopId, shopId), eq(calibrationProfiles.id, id)));
}
