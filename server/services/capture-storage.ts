import { createHash, randomBytes } from 'node:crypto';
import { createReadStream, createWriteStream } from 'node:fs';
import { mkdir, open, readdir, rename, stat, unlink } from 'node:fs/promises';
import { join } from 'node:path';
import { Transform, type Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { StorageEngine } from 'multer';

// Captures live content-addressed under FILES_DIR/ab/cd/<sha256>.wav: identical recordings are
// stored once, a stored file never changes, and its name proves its content.
// Uploads land first in FILES_DIR/tmp under a random name, hashed while they stream in.

/** Bytes kept from the start of each upload for header validation. */
export const HEAD_BYTES = 64 * 1024;

declare global {
  namespace Express {
    namespace Multer {
      interface File {
        /** Set by hashingStorage: hex SHA-256 of the whole file. */
        sha256?: string;
        /** Set by hashingStorage: the first HEAD_BYTES bytes. */
        head?: Buffer;
      }
    }
  }
}

export const tempDir = (filesDir: string) => join(filesDir, 'tmp');

export function storagePath(filesDir: string, sha256: string): string {
  if (!/^[0-9a-f]{64}$/.test(sha256)) throw new Error(`not a SHA-256 hex digest: ${sha256}`);
  return join(filesDir, sha256.slice(0, 2), sha256.slice(2, 4), `${sha256}.wav`);
}

export async function removeQuietly(path: string | undefined): Promise<void> {
  if (!path) return;
  await unlink(path).catch((err: NodeJS.ErrnoException) => {
    if (err.code !== 'ENOENT') throw err;
  });
}

/** A multer storage engine writing to a temp folder and hashing in the same pass. */
export function hashingStorage(dir: string): StorageEngine {
  return {
    _handleFile(_req, file, callback) {
      // The process id in the name lets a restarted server tell its dead predecessor's leftovers from live uploads.
      const path = join(dir, `upload-${process.pid}-${randomBytes(12).toString('hex')}.part`);
      // Set at once so multer can remove a half-written file when the request is aborted.
      file.path = path;
      const hash = createHash('sha256');
      const head: Buffer[] = [];
      let headLength = 0;
      let size = 0;
      const tap = new Transform({
        transform(chunk: Buffer, _enc, done) {
          hash.update(chunk);
          size += chunk.length;
          if (headLength < HEAD_BYTES) {
            const part = chunk.subarray(0, HEAD_BYTES - headLength);
            head.push(Buffer.from(part));
            headLength += part.length;
          }
          done(null, chunk);
        },
      });
      mkdir(dir, { recursive: true })
        .then(() => pipeline(file.stream, tap, createWriteStream(path, { flags: 'wx' })))
        .then(
          () => callback(null, { path, size, sha256: hash.digest('hex'), head: Buffer.concat(head) }),
          async (err: unknown) => {
            await removeQuietly(path).catch(() => undefined);
            callback(err);
          },
        );
    },
    _removeFile(_req, file, callback) {
      removeQuietly(file.path).then(
        () => callback(null),
        (err: Error) => callback(err),
      );
    },
  };
}

/** A stored capture opened for reading: its length, and any byte range of it as a stream. */
export interface StoredCaptureBytes {
  size: number;
  /** Bytes start … end inclusive (HTTP range numbering), or the whole file. */
  read(range?: { start: number; end: number }): Readable;
}

/**
 * The one way stored capture bytes are read for sending (playback, range requests), so a storage
 * driver other than the local folder only has to answer here. Null when the file is missing.
 */
export async function openStoredCapture(filesDir: string, sha256: string): Promise<StoredCaptureBytes | null> {
  const path = storagePath(filesDir, sha256);
  const info = await stat(path).catch((err: NodeJS.ErrnoException) => {
    if (err.code === 'ENOENT') return null;
    throw err;
  });
  if (!info) return null;
  return {
    size: info.size,
    read: (range) => createReadStream(path, range ? { start: range.start, end: range.end, highWaterMark: 256 * 1024 } : { highWaterMark: 256 * 1024 }),
  };
}

async function fsyncPath(path: string, flags: 'r' | 'r+'): Promise<void> {
  const handle = await open(path, flags);
  try {
    await handle.sync();
  } finally {
    await handle.close();
  }
}

/**
 * Moves a hashed temp file into content-addressed storage. The data is fsynced before the rename
 * and the folder after it, so a crash leaves either no file or the whole file under its hash.
 * Returns created = false when the same content was already stored (the temp file is removed).
 */
export async function storeContentAddressed(filesDir: string, tempPath: string, sha256: string): Promise<{ path: string; created: boolean }> {
  const target = storagePath(filesDir, sha256);
  const exists = await stat(target).then(
    () => true,
    (err: NodeJS.ErrnoException) => {
      if (err.code === 'ENOENT') return false;
      throw err;
    },
  );
  if (exists) {
    await removeQuietly(tempPath);
    return { path: target, created: false };
  }
  const folder = join(filesDir, sha256.slice(0, 2), sha256.slice(2, 4));
  await mkdir(folder, { recursive: true });
  await fsyncPath(tempPath, 'r+');
  await rename(tempPath, target);
  await fsyncPath(folder, 'r').catch(() => undefined); // not every file system syncs folders
  return { path: target, created: true };
}

function processAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Removes half-received uploads left by a server that was killed mid-request: temp files whose
 * writing process is gone, and any other temp file older than a day.
 */
export async function sweepOrphanedUploads(filesDir: string): Promise<number> {
  const dir = tempDir(filesDir);
  const names = await readdir(dir).catch(() => [] as string[]);
  let removed = 0;
  for (const name of names) {
    const owner = /^upload-(\d+)-[0-9a-f]+\.part$/.exec(name);
    const path = join(dir, name);
    const stale = owner
      ? Number(owner[1]) !== process.pid && !processAlive(Number(owner[1]))
      : Date.now() - (await stat(path)).mtimeMs > 24 * 3600_000;
    if (stale) {
      await removeQuietly(path);
      removed++;
    }
  }
  return removed;
}
