/**
 * The stored-files settings of this checkout for `npm start`, backup and restore: the environment's
 * STORAGE and S3_* settings, FILES_DIR defaulting to .data/files, and for STORAGE=s3 without an
 * S3_ENDPOINT a local S3-compatible server keeping its objects in .data/s3.
 */
import { join } from 'node:path';
import type { FileStore } from '../../server/storage/file-store';
import { loadStorageSettings, openFileStore } from '../../server/storage/storage-config';
import { startLocalS3, type LocalS3 } from './local-s3';

export interface ProjectStorage {
  /** The environment with the storage settings filled in, for the server. */
  env: Record<string, string | undefined>;
  store: FileStore;
  localS3: LocalS3 | null;
  stop(): Promise<void>;
}

export async function projectStorage(dataDir: string, base: Record<string, string | undefined> = process.env): Promise<ProjectStorage> {
  const localS3 =
    base.STORAGE === 's3' && !base.S3_ENDPOINT ? await startLocalS3({ dir: join(dataDir, 's3'), port: Number(base.S3_PORT ?? 0) }) : null;
  const env = { ...base, ...localS3?.env, FILES_DIR: base.FILES_DIR ?? join(dataDir, 'files') };
  try {
    return { env, store: await openFileStore(loadStorageSettings(env)), localS3, stop: async () => localS3?.stop() };
  } catch (err) {
    await localS3?.stop();
    throw err;
  }
}

/** What backup and restore copy: the local folder as a whole, or every object in the bucket. */
export function filesOf(storage: ProjectStorage): { filesDir: string } | { store: FileStore } {
  return storage.store.kind === 'local' ? { filesDir: storage.env.FILES_DIR! } : { store: storage.store };
}
