import { createReadStream } from 'node:fs';
import { stat, unlink } from 'node:fs/promises';
import type { Readable } from 'node:stream';
import {
  DeleteObjectCommand,
  GetObjectCommand,
  HeadBucketCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  PutObjectCommand,
  S3Client,
} from '@aws-sdk/client-s3';
import { Upload } from '@aws-sdk/lib-storage';
import { checkKey, StoredFileMissing, type ByteRange, type FileStore } from './file-store';
import type { S3Settings } from './storage-config';

// The S3-compatible driver. An object appears only when its upload completes (a multipart upload
// that fails is aborted and leaves no object), so readers never see half a file. Large files go
// up in parts read from the local file: at most PART_BYTES × PARTS_IN_FLIGHT in memory.

const PART_BYTES = 8 * 1024 * 1024;
const PARTS_IN_FLIGHT = 2;

function notFound(err: unknown): boolean {
  const e = err as { name?: string; $metadata?: { httpStatusCode?: number } };
  return e?.name === 'NoSuchKey' || e?.name === 'NotFound' || e?.$metadata?.httpStatusCode === 404;
}

export function s3Client(s: S3Settings): S3Client {
  return new S3Client({
    region: s.region,
    endpoint: s.endpoint,
    forcePathStyle: s.forcePathStyle,
    credentials: s.accessKeyId && s.secretAccessKey ? { accessKeyId: s.accessKeyId, secretAccessKey: s.secretAccessKey } : undefined,
    // Many S3-compatible servers do not take the SDK's default trailing checksums on uploads.
    requestChecksumCalculation: 'WHEN_REQUIRED',
    responseChecksumValidation: 'WHEN_REQUIRED',
  });
}

/** Checks the bucket can be reached with these settings, with an error that says which. */
export async function checkBucket(client: S3Client, s: S3Settings): Promise<void> {
  try {
    await client.send(new HeadBucketCommand({ Bucket: s.bucket }));
  } catch (err) {
    const why = notFound(err) ? 'it does not exist' : err instanceof Error ? `${err.name}: ${err.message}` : String(err);
    throw new Error(`The S3 bucket "${s.bucket}"${s.endpoint ? ` at ${s.endpoint}` : ''} cannot be used: ${why}`);
  }
}

export function s3Store(client: S3Client, s: S3Settings, scratchDir: string): FileStore {
  const Bucket = s.bucket;

  async function upload(key: string, localPath: string): Promise<void> {
    const { size } = await stat(localPath);
    const up = new Upload({
      client,
      params: { Bucket, Key: checkKey(key), Body: createReadStream(localPath), ContentLength: size },
      partSize: PART_BYTES,
      queueSize: PARTS_IN_FLIGHT,
      leavePartsOnError: false,
    });
    await up.done();
  }

  async function head(key: string): Promise<number | null> {
    try {
      const res = await client.send(new HeadObjectCommand({ Bucket, Key: checkKey(key) }));
      return res.ContentLength ?? 0;
    } catch (err) {
      if (notFound(err)) return null;
      throw err;
    }
  }

  async function* keys(prefix: string): AsyncGenerator<string> {
    let token: string | undefined;
    do {
      const page = await client.send(new ListObjectsV2Command({ Bucket, Prefix: prefix || undefined, ContinuationToken: token }));
      for (const o of page.Contents ?? []) if (o.Key) yield o.Key;
      token = page.IsTruncated ? page.NextContinuationToken : undefined;
    } while (token);
  }

  return {
    kind: 's3',
    scratchDir,

    async putFileOnce(key, localPath) {
      // Two nodes storing the same content is harmless: the bytes, and so the object, are equal.
      const created = (await head(key)) === null;
      if (created) await upload(key, localPath);
      await unlink(localPath).catch(() => undefined);
      return { created };
    },

    putFile: upload,

    async putBytes(key, bytes) {
      await client.send(new PutObjectCommand({ Bucket, Key: checkKey(key), Body: bytes, ContentLength: bytes.byteLength }));
    },

    async readBytes(key) {
      try {
        const res = await client.send(new GetObjectCommand({ Bucket, Key: checkKey(key) }));
        return Buffer.from(await res.Body!.transformToByteArray());
      } catch (err) {
        if (notFound(err)) return null;
        throw err;
      }
    },

    async openRead(key, range?: ByteRange): Promise<Readable> {
      const Range = range ? `bytes=${range.start}-${range.end ?? ''}` : undefined;
      try {
        const res = await client.send(new GetObjectCommand({ Bucket, Key: checkKey(key), Range }));
        return res.Body as Readable;
      } catch (err) {
        if (notFound(err)) throw new StoredFileMissing(key);
        throw err;
      }
    },

    size: head,

    async remove(key) {
      await client.send(new DeleteObjectCommand({ Bucket, Key: checkKey(key) }));
    },

    async removeFolder(prefix) {
      const batch: string[] = [];
      const flush = async () => {
        await Promise.all(batch.map((Key) => client.send(new DeleteObjectCommand({ Bucket, Key }))));
        batch.length = 0;
      };
      for await (const key of keys(`${checkKey(prefix)}/`)) {
        batch.push(key);
        if (batch.length >= 16) await flush();
      }
      await flush();
    },

    list() {
      return keys('');
    },
  };
}
