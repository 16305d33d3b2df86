/**
 * A local S3-compatible server (the s3rver package) in its own process on 127.0.0.1, keeping its
 * objects in a folder: for tests, the API bench and trying STORAGE=s3 on one machine.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';

export interface LocalS3 {
  endpoint: string;
  bucket: string;
  /** The environment a node needs to use this server. */
  env: Record<string, string>;
  stop(): Promise<void>;
}

/** The fixed credentials the local server accepts. */
const KEY = 'S3RVER';

export async function startLocalS3(options: { dir: string; bucket?: string; port?: number }): Promise<LocalS3> {
  const bucket = options.bucket ?? 'quietpath';
  mkdirSync(options.dir, { recursive: true });
  const cli = join(dirname(createRequire(import.meta.url).resolve('s3rver/package.json')), 'bin', 's3rver.js');
  const args = [cli, '-d', options.dir, '-a', '127.0.0.1', '-p', String(options.port ?? 0), '--silent', '--no-vhost-buckets', '--configure-bucket', bucket];
  const proc: ChildProcess = spawn(process.execPath, args, { stdio: ['ignore', 'pipe', 'pipe'] });
  const port = await new Promise<number>((resolve, reject) => {
    let out = '';
    let err = '';
    proc.stdout!.on('data', (d: Buffer) => {
      out += d.toString();
      const m = /listening on [^:]+:(\d+)/.exec(out);
      if (m) resolve(Number(m[1]));
    });
    proc.stderr!.on('data', (d: Buffer) => (err += d.toString()));
    proc.once('exit', (code) => reject(new Error(`the local S3 server exited with ${code}: ${err.trim()}`)));
  });
  proc.stdout!.resume();
  proc.stderr!.resume();
  const endpoint = `http://127.0.0.1:${port}`;
  return {
    endpoint,
    bucket,
    env: {
      STORAGE: 's3',
      S3_ENDPOINT: endpoint,
      S3_BUCKET: bucket,
      S3_REGION: 'us-east-1',
      S3_ACCESS_KEY_ID: KEY,
      S3_SECRET_ACCESS_KEY: KEY,
      S3_FORCE_PATH_STYLE: 'true',
    },
    stop: () =>
      new Promise<void>((resolve) => {
        if (proc.exitCode !== null || proc.signalCode !== null) return resolve();
        proc.once('exit', () => resolve());
        proc.kill('SIGTERM');
      }),
  };
}
