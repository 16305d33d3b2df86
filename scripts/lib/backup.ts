/**
 * Backups of the whole shop: a pg_dump (custom format) of the database plus a copy of the stored
 * files, in one folder. Restore replaces both.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, readdirSync, rmSync, writeFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ensurePostgresBinaries } from './pg-cluster';

interface Target {
  databaseUrl: string;
  filesDir: string;
}

function pgTool(tool: string, args: string[], databaseUrl: string): void {
  const bin = ensurePostgresBinaries(() => {});
  const url = new URL(databaseUrl);
  const env = {
    ...process.env,
    PGHOST: url.hostname,
    PGPORT: url.port,
    PGUSER: decodeURIComponent(url.username),
    PGPASSWORD: decodeURIComponent(url.password),
    PGDATABASE: url.pathname.slice(1),
  };
  const res = spawnSync(join(bin, tool), args, { env, encoding: 'utf8' });
  if (res.status !== 0) throw new Error(`${tool} failed: ${(res.stderr || res.stdout).trim()}`);
}

export function backup(target: Target, outDir: string): string {
  mkdirSync(outDir, { recursive: true });
  pgTool('pg_dump', ['--format=custom', '--no-owner', '--file', join(outDir, 'database.dump')], target.databaseUrl);
  if (existsSync(target.filesDir)) cpSync(target.filesDir, join(outDir, 'files'), { recursive: true });
  else mkdirSync(join(outDir, 'files'));
  writeFileSync(join(outDir, 'backup.json'), JSON.stringify({ madeAt: new Date().toISOString(), format: 1 }, null, 2));
  return outDir;
}

export function restore(target: Target, fromDir: string): void {
  const manifest = join(fromDir, 'backup.json');
  if (!existsSync(manifest) || !existsSync(join(fromDir, 'database.dump'))) {
    throw new Error(`${fromDir} is not a Quietpath backup (backup.json or database.dump missing)`);
  }
  JSON.parse(readFileSync(manifest, 'utf8'));
  // --single-transaction: a restore that fails part-way leaves the database as it was.
  pgTool(
    'pg_restore',
    ['--clean', '--if-exists', '--no-owner', '--single-transaction', '--dbname', new URL(target.databaseUrl).pathname.slice(1), join(fromDir, 'database.dump')],
    target.databaseUrl,
  );
  const staged = `${target.filesDir}.restoring`;
  rmSync(staged, { recursive: true, force: true });
  cpSync(join(fromDir, 'files'), staged, { recursive: true });
  rmSync(target.filesDir, { recursive: true, force: true });
  cpSync(staged, target.filesDir, { recursive: true });
  rmSync(staged, { recursive: true, force: true });
}

export function newestBackup(root: string): string | null {
  if (!existsSync(root)) return null;
  const names = readdirSync(root).filter((n) => n.startsWith('quietpath-')).sort();
  return names.length ? join(root, names[names.length - 1]!) : null;
}
