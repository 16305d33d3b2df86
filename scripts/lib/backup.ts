/**
 * Backups of the whole shop: a pg_dump (custom format) of the database plus a copy of the stored
 * files, in one folder. Restore replaces both.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, readdirSync, rmSync, writeFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import pg from 'pg';
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

/** Replaces the database with an empty one (ending any open connections), so a restore is exact. */
async function recreateDatabase(databaseUrl: string): Promise<void> {
  const url = new URL(databaseUrl);
  const name = decodeURIComponent(url.pathname.slice(1));
  url.pathname = '/postgres';
  const admin = new pg.Client({ connectionString: url.toString() });
  await admin.connect();
  try {
    const quoted = `"${name.replace(/"/g, '""')}"`;
    await admin.query(`drop database if exists ${quoted} with (force)`);
    await admin.query(`create database ${quoted}`);
  } finally {
    await admin.end();
  }
}

export async function restore(target: Target, fromDir: string): Promise<void> {
  const manifest = join(fromDir, 'backup.json');
  if (!existsSync(manifest) || !existsSync(join(fromDir, 'database.dump'))) {
    throw new Error(`${fromDir} is not a Quietpath backup (backup.json or database.dump missing)`);
  }
  JSON.parse(readFileSync(manifest, 'utf8'));
  // Check the dump is readable before anything is dropped.
  pgTool('pg_restore', ['--list', join(fromDir, 'database.dump')], target.databaseUrl);
  await recreateDatabase(target.databaseUrl);
  pgTool(
    'pg_restore',
    ['--no-owner', '--exit-on-error', '--single-transaction', '--dbname', new URL(target.databaseUrl).pathname.slice(1), join(fromDir, 'database.dump')],
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
