import { and, asc, eq, ilike, inArray, ne, sql, type AnyColumn, type SQL } from 'drizzle-orm';
import type { Db, DbOrTx } from '../db/client';
import { specFigures, specSheets, units } from '../db/schema/index';
import type { SpecMetric, SpecSheet, SpecSheetInput, SpecSheetSummary } from '../../shared/specs';
import { conflict, notFound } from '../http-error';

// One sheet per maker + model in a shop, matched without regard to case or repeated spaces, so
// "VELLMARK  solace 70" on a unit finds the "Vellmark Solace 70" sheet.
const norm = (col: AnyColumn) => sql`regexp_replace(lower(${col}), '\\s+', ' ', 'g')`;
const normText = (s: string) => s.toLowerCase().replace(/\s+/g, ' ');

/** Advisory lock namespace for spec-sheet writes, serialising the duplicate check per shop. */
const LOCK_NAMESPACE = 7301;

async function figuresOf(db: DbOrTx, sheetIds: number[]) {
  if (!sheetIds.length) return [];
  return db
    .select({ id: specFigures.id, specSheetId: specFigures.specSheetId, metric: specFigures.metric, value: specFigures.value, condition: specFigures.condition, source: specFigures.source })
    .from(specFigures)
    .where(inArray(specFigures.specSheetId, sheetIds))
    .orderBy(asc(specFigures.id));
}

async function load(db: DbOrTx, where: SQL | undefined): Promise<SpecSheet | null> {
  const [sheet] = await db.select().from(specSheets).where(where);
  if (!sheet) return null;
  const figures = await figuresOf(db, [sheet.id]);
  return {
    id: sheet.id,
    maker: sheet.maker,
    model: sheet.model,
    notes: sheet.notes,
    inputs: sheet.inputs,
    figures: figures.map(({ specSheetId: _s, ...f }) => ({ ...f, metric: f.metric as SpecMetric })),
    createdAt: sheet.createdAt.toISOString(),
  };
}

export async function listSheets(db: DbOrTx, shopId: number, search = ''): Promise<SpecSheetSummary[]> {
  const q = `%${search.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;
  const rows = await db
    .select({
      id: specSheets.id,
      maker: specSheets.maker,
      model: specSheets.model,
      createdAt: specSheets.createdAt,
      // Written out in full: inside a sub-select Drizzle leaves column names unqualified, and "id" would bind to spec_figures.
      figureCount: sql<number>`(select count(*)::int from spec_figures f where f.spec_sheet_id = "spec_sheets"."id")`,
    })
    .from(specSheets)
    .where(and(eq(specSheets.shopId, shopId), search ? ilike(sql`${specSheets.maker} || ' ' || ${specSheets.model}`, q) : undefined))
    .orderBy(asc(specSheets.maker), asc(specSheets.model));
  return rows.map((r) => ({ ...r, createdAt: r.createdAt.toISOString() }));
}

export async function getSheet(db: DbOrTx, shopId: number, id: number): Promise<SpecSheet> {
  const sheet = await load(db, and(eq(specSheets.shopId, shopId), eq(specSheets.id, id)));
  if (!sheet) throw notFound('Spec sheet');
  return sheet;
}

async function assertUnique(tx: DbOrTx, shopId: number, input: SpecSheetInput, exceptId?: number) {
  await tx.execute(sql`select pg_advisory_xact_lock(${LOCK_NAMESPACE}, ${shopId})`);
  const [clash] = await tx
    .select({ id: specSheets.id })
    .from(specSheets)
    .where(
      and(
        eq(specSheets.shopId, shopId),
        eq(norm(specSheets.maker), normText(input.maker)),
        eq(norm(specSheets.model), normText(input.model)),
        exceptId ? ne(specSheets.id, exceptId) : undefined,
      ),
    );
  if (clash) throw conflict(`There is already a spec sheet for ${input.maker} ${input.model}`);
}

async function writeFigures(tx: DbOrTx, shopId: number, sheetId: number, input: SpecSheetInput) {
  await tx.delete(specFigures).where(eq(specFigures.specSheetId, sheetId));
  if (input.figures.length) await tx.insert(specFigures).values(input.figures.map((f) => ({ ...f, shopId, specSheetId: sheetId })));
}

export async function createSheet(db: Db, shopId: number, input: SpecSheetInput): Promise<SpecSheet> {
  const id = await db.transaction(async (tx) => {
    await assertUnique(tx, shopId, input);
    const [row] = await tx.insert(specSheets).values({ shopId, maker: input.maker, model: input.model, notes: input.notes, inputs: input.inputs }).returning({ id: specSheets.id });
    await writeFigures(tx, shopId, row!.id, input);
    return row!.id;
  });
  return getSheet(db, shopId, id);
}

/** Replaces the sheet and all its figures in one transaction. */
export async function updateSheet(db: Db, shopId: number, id: number, input: SpecSheetInput): Promise<SpecSheet> {
  await db.transaction(async (tx) => {
    await assertUnique(tx, shopId, input, id);
    const [row] = await tx
      .update(specSheets)
      .set({ maker: input.maker, model: input.model, notes: input.notes, inputs: input.inputs })
      .where(and(eq(specSheets.shopId, shopId), eq(specSheets.id, id)))
      .returning({ id: specSheets.id });
    if (!row) throw notFound('Spec sheet');
    await writeFigures(tx, shopId, id, input);
  });
  return getSheet(db, shopId, id);
}

export async function deleteSheet(db: DbOrTx, shopId: number, id: number): Promise<void> {
  const gone = await db.delete(specSheets).where(and(eq(specSheets.shopId, shopId), eq(specSheets.id, id))).returning({ id: specSheets.id });
  if (!gone.length) throw notFound('Spec sheet');
}

/** The sheet whose maker and model match the unit's. */
export async function sheetForUnit(db: DbOrTx, shopId: number, unitId: number): Promise<SpecSheet> {
  const [unit] = await db.select({ maker: units.maker, model: units.model }).from(units).where(and(eq(units.shopId, shopId), eq(units.id, unitId)));
  if (!unit) throw notFound('Unit');
  const sheet = await load(
    db,
    and(eq(specSheets.shopId, shopId), eq(norm(specSheets.maker), normText(unit.maker)), eq(norm(specSheets.model), normText(unit.model))),
  );
  if (!sheet) throw notFound(`Spec sheet for ${unit.maker} ${unit.model}`);
  return sheet;
}
