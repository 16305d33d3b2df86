import { createHash, randomBytes } from 'node:crypto';
import { createWriteStream } from 'node:fs';
import { mkdir, readdir, stat, unlink } from 'node:fs/promises';
import { join } from 'node:path';
import { Transform, type Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { StorageEngine } from 'multer';
import type { ByteRange, FileStore } from '../storage/file-store';

// Captures are stored content-addressed under the key ab/cd/<sha256>.wav: identical recordings
// are stored once, a stored file never changes, and its name proves its content.
// Uploads land first in this node's scratch folder under a random name, hashed while they stream
// in, and go to the store (a local folder or a shared bucket) only once checked.

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

/** The scratch folder of a local store rooted at filesDir. */
export const tempDir = (filesDir: string) => join(filesDir, 'tmp');

export function captureKey(sha256: string): string {
  if (!/^[0-9a-f]{64}$/.test(sha256)) throw new Error(`not a SHA-256 hex digest: ${sha256}`);
  return `${sha256.slice(0, 2)}/${sha256.slice(2, 4)}/${sha256}.wav`;
}

/** Where a local store rooted at filesDir keeps a capture. */
export function storagePath(filesDir: string, sha256: string): string {
  return join(filesDir, ...captureKey(sha256).split('/'));
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

/**
 * Moves a hashed temp file into content-addressed storage: afterwards the store holds either no
 * file or the whole file under its hash. Returns created = false when the same content was
 * already stored. The temp file is gone afterwards unless storing failed.
 */
export async function storeContentAddressed(store: FileStore, tempPath: string, sha256: string): Promise<{ created: boolean }> {
  return store.putFileOnce(captureKey(sha256), tempPath);
}

/** A stored capture's bytes, whole or a range of them (for downloads and playback). */
export function readCapture(store: FileStore, sha256: string, range?: ByteRange): Promise<Readable> {
  return store.openRead(captureKey(sha256), range);
}

/** A stored capture's size in bytes, or null when its file is missing. */
export function storedCaptureSize(store: FileStore, sha256: string): Promise<number | null> {
  return store.size(captureKey(sha256));
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
 * Removes half-received uploads left in this node's scratch folder by a server that was killed
 * mid-request: temp files whose writing process is gone, and any other temp file older than a day.
 */
export async function sweepOrphanedUploads(scratchDir: string): Promise<number> {
  const names = await readdir(scratchDir).catch(() => [] as string[]);
  let removed = 0;
  for (const name of names) {
    const owner = /^upload-(\d+)-[0-9a-f]+\.part$/.exec(name);
    const path = join(scratchDir, name);
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
