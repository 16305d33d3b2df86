import type { Readable } from 'node:stream';

// Every stored byte (captures, live-recording chunks) goes through a FileStore, so a node can keep
// them in a local folder or in S3-compatible object storage shared by many nodes. Keys are
// relative paths with "/" separators, e.g. "ab/cd/<sha256>.wav" or "recordings/12/0.pcm".

/** A byte range, both ends inclusive as in an HTTP Range header; end absent: to the end. */
export interface ByteRange {
  start: number;
  end?: number;
}

export interface FileStore {
  readonly kind: 'local' | 's3';
  /**
   * A folder on this node for uploads being received: never shared, only whole checked files
   * leave it for the store.
   */
  readonly scratchDir: string;
  /**
   * Moves a finished local file to `key` unless something is stored there already; the local file
   * is gone afterwards either way. Readers see the whole file under `key` or nothing.
   */
  putFileOnce(key: string, localPath: string): Promise<{ created: boolean }>;
  /** Stores (or replaces) a local file's bytes under `key`, whole or not at all; the file stays. */
  putFile(key: string, localPath: string): Promise<void>;
  /** Stores (or replaces) `bytes` under `key`, whole or not at all. */
  putBytes(key: string, bytes: Uint8Array): Promise<void>;
  /** The stored bytes, or null when nothing is stored under `key`. */
  readBytes(key: string): Promise<Buffer | null>;
  /** Streams the stored bytes (or a range of them); rejects with StoredFileMissing when absent. */
  openRead(key: string, range?: ByteRange): Promise<Readable>;
  /** Size in bytes, or null when nothing is stored under `key`. */
  size(key: string): Promise<number | null>;
  /** Removes `key`; nothing stored there is not an error. */
  remove(key: string): Promise<void>;
  /** Removes every key under `prefix` + "/". */
  removeFolder(prefix: string): Promise<void>;
  /** Every stored key (scratch space excluded), in no particular order. */
  list(): AsyncIterable<string>;
}

/** Nothing is stored under the key. Carries ENOENT so callers treat it as a missing file. */
export class StoredFileMissing extends Error {
  readonly code = 'ENOENT';
  constructor(key: string) {
    super(`nothing is stored under ${key}`);
    this.name = 'StoredFileMissing';
  }
}

/** A key must stay inside the store: no absolute paths, empty parts or "..". */
export function checkKey(key: string): string {
  const parts = key.split('/');
  if (key.length === 0 || parts.some((p) => p === '' || p === '.' || p === '..' || p.includes('\\'))) {
    throw new Error(`not a storage key: ${key}`);
  }
  return key;
}
