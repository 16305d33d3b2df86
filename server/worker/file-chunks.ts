import { closeSync, openSync, readSync } from 'node:fs';
import { open } from 'node:fs/promises';

/**
 * Reads a file in 1 MiB chunks through two reused buffers, starting the next read before handing
 * out the current chunk so disk and analysis overlap. Safe with CaptureAnalyzer, which never keeps
 * a chunk after push() returns. (fs.createReadStream allocates a fresh buffer per chunk, and its
 * garbage costs more than the reads themselves on a long capture.)
 */
export async function* readFileChunks(path: string, chunkBytes = 1 << 20): AsyncGenerator<Uint8Array> {
  const fh = await open(path, 'r');
  try {
    const buffers = [new Uint8Array(chunkBytes), new Uint8Array(chunkBytes)];
    let turn = 0;
    let pending = fh.read(buffers[0]!, 0, chunkBytes, null);
    for (;;) {
      const { bytesRead } = await pending;
      if (bytesRead === 0) return;
      const current = buffers[turn]!;
      turn ^= 1;
      pending = fh.read(buffers[turn]!, 0, chunkBytes, null);
      yield current.subarray(0, bytesRead);
    }
  } finally {
    await fh.close();
  }
}

/**
 * Reads a file in chunks with blocking reads into one reused buffer. For an analysis thread,
 * which has nothing else to do while it waits: the bytes are copied in by the thread that then
 * decodes them, so they are still in its cache (an asynchronous read copies them on another
 * thread, often on the other core). Never on a thread that serves requests.
 */
export function* readFileChunksBlocking(path: string, chunkBytes = 256 * 1024): Generator<Uint8Array> {
  const fd = openSync(path, 'r');
  try {
    const buffer = new Uint8Array(chunkBytes);
    for (;;) {
      const n = readSync(fd, buffer, 0, chunkBytes, null);
      if (n === 0) return;
      yield buffer.subarray(0, n);
    }
  } finally {
    closeSync(fd);
  }
}
