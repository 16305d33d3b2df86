/**
 * Backups of the whole shop: a pg_dump (custom format) of the database plus a copy of the stored
 * files (from the local folder, or every object of the S3 bucket), in one folder. Restore
 * replaces both.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, readdirSync, rmSync, writeFileSync, readFileSync } from 'node:fs';
import { createWriteStream } from 'node:fs';
import { mkdir, readdir } from 'node:fs/promises';
import { dirname, join, relative, sep } from 'node:path';
import { pipeline } from 'node:stream/promises';
import pg from 'pg';
import type { FileStore } from '../../server/storage/file-store';
import { ensurePostgresBinaries } from './pg-cluster';

/** The database and where its files are: a local folder, or a store (an S3 bucket). */
type Target = { databaseUrl: string } & ({ filesDir: string } | { store: FileStore });

/** Every stored object into a folder, one file per key, streamed. */
async function copyOut(store: FileStore, dir: string): Promise<void> {
  mkdirSync(dir, { recursive: true });
  for await (const key of store.list()) {
    const path = join(dir, ...key.split('/'));
    await mkdir(dirname(path), { recursive: true });
    await pipeline(await store.openRead(key), createWriteStream(path));
  }
}

async function filesUnder(dir: string): Promise<string[]> {
  const entries = await readdir(dir, { recursive: true, withFileTypes: true });
  return entries.filter((e) => e.isFile()).map((e) => relative(dir, join(e.parentPath, e.name)).split(sep).join('/'));
}

/** The folder's files into the store, then whatever the backup does not have is removed. */
async function copyIn(store: FileStore, dir: string): Promise<void> {
  const keys = new Set(await filesUnder(dir));
  for (const key of keys) await store.putFile(key, join(dir, ...key.split('/')));
  const extra: string[] = [];
  for await (const key of store.list()) if (!keys.has(key)) extra.push(key);
  for (const key of extra) await store.remove(key);
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

export async function backup(target: Target, outDir: string): Promise<string> {
  mkdirSync(outDir, { recursive: true });
  pgTool('pg_dump', ['--format=custom', '--no-owner', '--file', join(outDir, 'database.dump')], target.databaseUrl);
  if ('store' in target) await copyOut(target.store, join(outDir, 'files'));
  else if (existsSync(target.filesDir)) cpSync(target.filesDir, join(outDir, 'files'), { recursive: true });
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
  if ('store' in target) {
    await copyIn(target.store, join(fromDir, 'files'));
    return;
  }
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
