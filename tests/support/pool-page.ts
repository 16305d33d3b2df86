import { createServer, type Server } from 'node:http';
import { readFile } from 'node:fs/promises';
import { extname, join, normalize, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { build } from 'vite';

// Builds the bare pool page (pool-page/) with Vite, as the app is built, and serves it with the
// WAV files of a folder under /wav/. Module workers need an http origin, not file://.

const here = fileURLToPath(new URL('.', import.meta.url));
const TYPES: Record<string, string> = { '.html': 'text/html', '.js': 'text/javascript', '.wav': 'audio/wav' };

export interface PoolPage {
  url: string;
  close(): Promise<void>;
}

export async function startPoolPage(outDir: string, wavDir: string): Promise<PoolPage> {
  await build({
    configFile: false,
    root: join(here, 'pool-page'),
    logLevel: 'warn',
    build: { outDir, emptyOutDir: true },
  });
  const server: Server = createServer((req, res) => {
    const path = decodeURIComponent(new URL(req.url ?? '/', 'http://x').pathname);
    const file = path.startsWith('/wav/') ? join(wavDir, path.slice(5)) : join(outDir, path === '/' ? 'index.html' : path);
    const base = resolve(path.startsWith('/wav/') ? wavDir : outDir);
    if (!normalize(file).startsWith(base)) {
      res.writeHead(403).end();
      return;
    }
    readFile(file).then(
      (body) => res.writeHead(200, { 'content-type': TYPES[extname(file)] ?? 'application/octet-stream' }).end(body),
      () => res.writeHead(404).end(),
    );
  });
  await new Promise<void>((ok) => server.listen(0, '127.0.0.1', ok));
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : 0;
  return {
    url: `http://127.0.0.1:${port}`,
    close: () => new Promise<void>((ok) => server.close(() => ok())),
  };
}
