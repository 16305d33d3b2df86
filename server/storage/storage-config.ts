import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { z } from 'zod';
import type { FileStore } from './file-store';
import { localStore } from './local-store';
import { checkBucket, s3Client, s3Store } from './s3-store';

// Where stored bytes live, read from the environment by the server and by stand-alone workers
// alike: every node of one installation must be given the same settings.

export const storageEnvShape = {
  /** local: a folder (FILES_DIR); s3: an S3-compatible bucket shared by every node. */
  STORAGE: z.enum(['local', 's3']).default('local'),
  /** local: where files are stored, content-addressed; s3: this node's folder for uploads in progress (optional). */
  FILES_DIR: z.string().min(1).optional(),
  S3_BUCKET: z
    .string()
    .regex(/^[a-z0-9][a-z0-9.-]{1,61}[a-z0-9]$/, 'S3_BUCKET must be a bucket name: 3–63 lower-case letters, digits, dots or hyphens')
    .optional(),
  /** An S3-compatible server's address; absent: the provider's own endpoint for S3_REGION. */
  S3_ENDPOINT: z.string().url().optional(),
  S3_REGION: z.string().min(1).default('us-east-1'),
  /** Absent: the SDK's usual credential sources (AWS_* variables, instance role). */
  S3_ACCESS_KEY_ID: z.string().min(1).optional(),
  S3_SECRET_ACCESS_KEY: z.string().min(1).optional(),
  /** Bucket in the path rather than the host name; default: on when S3_ENDPOINT is set. */
  S3_FORCE_PATH_STYLE: z.enum(['true', 'false']).optional(),
};

const storageEnvSchema = z.object(storageEnvShape);
type StorageEnv = z.infer<typeof storageEnvSchema>;

/** The rules between the fields, for z.object(...).superRefine. */
export function checkStorageEnv(env: StorageEnv, ctx: z.RefinementCtx): void {
  if (env.STORAGE === 'local' && !env.FILES_DIR) {
    ctx.addIssue({ code: 'custom', path: ['FILES_DIR'], message: 'FILES_DIR is needed with STORAGE=local (the folder for stored files)' });
  }
  if (env.STORAGE === 's3' && !env.S3_BUCKET) {
    ctx.addIssue({ code: 'custom', path: ['S3_BUCKET'], message: 'S3_BUCKET is needed with STORAGE=s3' });
  }
  if (Boolean(env.S3_ACCESS_KEY_ID) !== Boolean(env.S3_SECRET_ACCESS_KEY)) {
    ctx.addIssue({ code: 'custom', path: ['S3_SECRET_ACCESS_KEY'], message: 'Give both S3_ACCESS_KEY_ID and S3_SECRET_ACCESS_KEY, or neither' });
  }
}

export interface S3Settings {
  bucket: string;
  endpoint?: string;
  region: string;
  accessKeyId?: string;
  secretAccessKey?: string;
  forcePathStyle: boolean;
}

export type StorageSettings = { kind: 'local'; filesDir: string } | { kind: 's3'; s3: S3Settings; scratchDir: string };

/** From an environment that passed storageEnvShape and checkStorageEnv. */
export function storageSettings(env: StorageEnv): StorageSettings {
  if (env.STORAGE === 'local') return { kind: 'local', filesDir: env.FILES_DIR! };
  return {
    kind: 's3',
    scratchDir: join(env.FILES_DIR ?? join(tmpdir(), 'quietpath-files'), 'tmp'),
    s3: {
      bucket: env.S3_BUCKET!,
      endpoint: env.S3_ENDPOINT,
      region: env.S3_REGION,
      accessKeyId: env.S3_ACCESS_KEY_ID,
      secretAccessKey: env.S3_SECRET_ACCESS_KEY,
      forcePathStyle: env.S3_FORCE_PATH_STYLE ? env.S3_FORCE_PATH_STYLE === 'true' : Boolean(env.S3_ENDPOINT),
    },
  };
}

/** Storage settings straight from an environment, with the same clear errors as the server's. */
export function loadStorageSettings(env: Record<string, string | undefined>): StorageSettings {
  const parsed = storageEnvSchema.superRefine(checkStorageEnv).safeParse(env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`).join('\n');
    throw new Error(`Invalid storage settings:\n${lines}`);
  }
  return storageSettings(parsed.data);
}

/** The store for these settings; an unreachable bucket is an error here, at start-up. */
export async function openFileStore(settings: StorageSettings): Promise<FileStore> {
  if (settings.kind === 'local') return localStore(settings.filesDir);
  const client = s3Client(settings.s3);
  await checkBucket(client, settings.s3);
  return s3Store(client, settings.s3, settings.scratchDir);
}
