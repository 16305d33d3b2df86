import { afterAll, beforeAll, describe, expect, it, inject } from 'vitest';
import { mkdirSync, mkdtempSync, writeFileSync, readFileSync, existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import { testDb } from '../support/server';
import { backup, restore } from '../../scripts/lib/backup';
import { customers, shops } from '../../server/db/schema/index';
import { startLocalS3 } from '../../scripts/lib/local-s3';
import { loadStorageSettings, openFileStore } from '../../server/storage/storage-config';

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

  it('with S3 storage, copies every object out and puts the bucket back as it was', async () => {
    const s3 = await startLocalS3({ dir: join(dir, 's3') });
    try {
      const store = await openFileStore(loadStorageSettings({ ...s3.env, FILES_DIR: join(dir, 's3-scratch') }));
      await store.putBytes('ab/cd/kept.wav', new TextEncoder().encode('RIFF-kept'));
      await store.putBytes('recordings/7/0.pcm', new Uint8Array([1, 2, 3]));
      await backup({ databaseUrl: inject('databaseUrl'), store }, join(dir, 's3-snapshot'));
      expect(readFileSync(join(dir, 's3-snapshot', 'files', 'ab', 'cd', 'kept.wav'), 'utf8')).toBe('RIFF-kept');

      await store.putBytes('ab/cd/kept.wav', new TextEncoder().encode('changed'));
      await store.putBytes('ab/cd/later.wav', new TextEncoder().encode('later'));
      await store.remove('recordings/7/0.pcm');
      await close();
      await restore({ databaseUrl: inject('databaseUrl'), store }, join(dir, 's3-snapshot'));
      ({ db, close } = testDb());

      const keys: string[] = [];
      for await (const k of store.list()) keys.push(k);
      expect(keys.sort()).toEqual(['ab/cd/kept.wav', 'recordings/7/0.pcm']);
      expect((await store.readBytes('ab/cd/kept.wav'))!.toString()).toBe('RIFF-kept');
      expect([...(await store.readBytes('recordings/7/0.pcm'))!]).toEqual([1, 2, 3]);
    } finally {
      await s3.stop();
    }
  });

  it('refuses a folder that is not a backup', async () => {
    const empty = mkdtempSync(join(dir, 'not-a-backup-'));
    await expect(restore({ databaseUrl: inject('databaseUrl'), filesDir: join(dir, 'x') }, empty)).rejects.toThrow(/not a Quietpath backup/);
  });
});
