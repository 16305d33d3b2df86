import { afterAll, beforeAll, describe, expect, it, inject } from 'vitest';
import { mkdirSync, mkdtempSync, writeFileSync, readFileSync, existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import { testDb } from '../support/server';
import { backup, restore } from '../../scripts/lib/backup';
import { customers, shops } from '../../server/db/schema/index';

let { db, close } = testDb();
afterAll(() => close());

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(inject('scratchDir'), 'backup-'));
});

describe('backup and restore round trip (pg_dump / pg_restore)', () => {
  it('brings back deleted rows and files, and drops what came after the backup', async () => {
    const filesDir = join(dir, 'files');
    mkdirSync(join(filesDir, 'ab'), { recursive: true });
    writeFileSync(join(filesDir, 'ab', 'kept.wav'), 'RIFF-kept');
    const [shop] = await db.select().from(shops).limit(1);
    const [kept] = await db.insert(customers).values({ shopId: shop!.id, name: 'Backed-up Customer' }).returning();

    await backup({ databaseUrl: inject('databaseUrl'), filesDir }, join(dir, 'snapshot'));
    expect(existsSync(join(dir, 'snapshot', 'database.dump'))).toBe(true);

    await db.delete(customers).where(eq(customers.id, kept!.id));
    const [later] = await db.insert(customers).values({ shopId: shop!.id, name: 'After The Backup' }).returning();
    writeFileSync(join(filesDir, 'ab', 'kept.wav'), 'changed');
    writeFileSync(join(filesDir, 'ab', 'later.wav'), 'later');

    // The restore replaces the database, ending open connections: reconnect afterwards.
    await close();
    await restore({ databaseUrl: inject('databaseUrl'), filesDir }, join(dir, 'snapshot'));
    ({ db, close } = testDb());

    const back = await db.select().from(customers).where(eq(customers.id, kept!.id));
    expect(back[0]?.name).toBe('Backed-up Customer');
    expect(await db.select().from(customers).where(eq(customers.id, later!.id))).toEqual([]);
    expect(readFileSync(join(filesDir, 'ab', 'kept.wav'), 'utf8')).toBe('RIFF-kept');
    expect(readdirSync(join(filesDir, 'ab'))).toEqual(['kept.wav']);
  });

  it('refuses a folder that is not a backup', async () => {
    const empty = mkdtempSync(join(dir, 'not-a-backup-'));
    await expect(restore({ databaseUrl: inject('databaseUrl'), filesDir: join(dir, 'x') }, empty)).rejects.toThrow(/not a Quietpath backup/);
  });
});
