import { randomBytes } from 'node:crypto';
import { copyFile, mkdir, open, readdir, readFile, rename, rm, stat, unlink } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import type { Readable } from 'node:stream';
import { checkKey, StoredFileMissing, type ByteRange, type FileStore } from './file-store';

// The local-folder driver: keys are paths under one folder (FILES_DIR). Writes go to a temp name
// beside the target, are fsynced, then renamed, so a crash leaves the old file, the whole new one
// or a temp file, never half a file under its key.

const SCRATCH = 'tmp';

const missing = (err: unknown) => (err as NodeJS.ErrnoException)?.code === 'ENOENT';

async function fsyncPath(path: string, flags: 'r' | 'r+'): Promise<void> {
  const handle = await open(path, flags);
  try {
    await handle.sync();
  } finally {
    await handle.close();
  }
}

async function unlinkQuietly(path: string): Promise<void> {
  await unlink(path).catch((err: unknown) => {
    if (!missing(err)) throw err;
  });
}

export function localStore(root: string): FileStore {
  const pathOf = (key: string) => join(root, ...checkKey(key).split('/'));

  /** Renames a synced file into place and syncs the folder, so the rename survives a crash. */
  async function settle(temp: string, target: string): Promise<void> {
    await fsyncPath(temp, 'r+');
    await rename(temp, target);
    await fsyncPath(dirname(target), 'r').catch(() => undefined); // not every file system syncs folders
  }

  const tempBeside = (target: string) => `${target}.${randomBytes(6).toString('hex')}.part`;

  async function* walk(dir: string, prefix: string): AsyncGenerator<string> {
    const entries = await readdir(dir, { withFileTypes: true }).catch((err: unknown) => {
      if (missing(err)) return [];
      throw err;
    });
    for (const e of entries) {
      if (prefix === '' && e.name === SCRATCH) continue;
      const key = prefix ? `${prefix}/${e.name}` : e.name;
      if (e.isDirectory()) yield* walk(join(dir, e.name), key);
      else if (e.isFile() && !e.name.endsWith('.part')) yield key;
    }
  }

  return {
    kind: 'local',
    scratchDir: join(root, SCRATCH),

    async putFileOnce(key, localPath) {
      const target = pathOf(key);
      if ((await this.size(key)) !== null) {
        await unlinkQuietly(localPath);
        return { created: false };
      }
      await mkdir(dirname(target), { recursive: true });
      await settle(localPath, target);
      return { created: true };
    },

    async putFile(key, localPath) {
      const target = pathOf(key);
      await mkdir(dirname(target), { recursive: true });
      const temp = tempBeside(target);
      try {
        await copyFile(localPath, temp);
        await settle(temp, target);
      } catch (err) {
        await unlinkQuietly(temp);
        throw err;
      }
    },

    async putBytes(key, bytes) {
      const target = pathOf(key);
      await mkdir(dirname(target), { recursive: true });
      const temp = tempBeside(target);
      try {
        const handle = await open(temp, 'wx');
        try {
          await handle.writeFile(bytes);
        } finally {
          await handle.close();
        }
        await settle(temp, target);
      } catch (err) {
        await unlinkQuietly(temp);
        throw err;
      }
    },

    async readBytes(key) {
      return readFile(pathOf(key)).catch((err: unknown) => {
        if (missing(err)) return null;
        throw err;
      });
    },

    async openRead(key, range?: ByteRange): Promise<Readable> {
      const handle = await open(pathOf(key), 'r').catch((err: unknown) => {
        throw missing(err) ? new StoredFileMissing(key) : err;
      });
      // Small reads: the engine works synchronously on each chunk, and in the server process the
      // HTTP requests wait between chunks, so this bounds their delay.
      return handle.createReadStream({ start: range?.start, end: range?.end, highWaterMark: 256 * 1024 });
    },

    async size(key) {
      return stat(pathOf(key)).then(
        (s) => (s.isFile() ? s.size : null),
        (err: unknown) => {
          if (missing(err)) return null;
          throw err;
        },
      );
    },

    async remove(key) {
      await unlinkQuietly(pathOf(key));
    },

    async removeFolder(prefix) {
      await rm(pathOf(prefix), { recursive: true, force: true });
    },

    list() {
      return walk(root, '');
    },
  };
}
