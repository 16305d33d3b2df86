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
