import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';

function newestMtime(dir: string): number {
  let newest = 0;
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    if (entry.name === 'node_modules' || entry.name === 'dist') continue;
    const p = join(dir, entry.name);
    const t = entry.isDirectory() ? newestMtime(p) : statSync(p).mtimeMs;
    if (t > newest) newest = t;
  }
  return newest;
}

/** Builds web/ with Vite when the build is missing or older than its sources. */
export function ensureWebBuild(root: string, log: (s: string) => void = console.log): string {
  const dist = join(root, 'web', 'dist');
  const index = join(dist, 'index.html');
  const sources = Math.max(newestMtime(join(root, 'web')), newestMtime(join(root, 'shared')), newestMtime(join(root, 'analysis')));
  if (!existsSync(index) || statSync(index).mtimeMs < sources) {
    log('Building the web app…');
    execFileSync(process.execPath, [join(root, 'node_modules', 'vite', 'bin', 'vite.js'), 'build', '--config', join(root, 'web', 'vite.config.ts'), '--logLevel', 'warn'], {
      stdio: 'inherit',
      cwd: root,
    });
  }
  return dist;
}
