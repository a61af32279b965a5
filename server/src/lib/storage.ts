import { mkdir, open, rm, writeFile } from 'node:fs/promises';
import { dirname, resolve, sep } from 'node:path';
import type { Readable } from 'node:stream';
import type { S3Client } from '@aws-sdk/client-s3';
import type { Config } from '../config/env';

/**
 * Where uploaded files live. Every server process reads and writes the same bucket (S3_URL, any
 * S3-compatible store), so a file uploaded through one process downloads through any other. Only
 * outside production, and only when no S3_URL is set, files stay in a folder on this machine
 * (UPLOAD_DIR): one process, nothing to share.
 */
export interface ObjectStorage {
  readonly kind: 'bucket' | 'folder';
  /** Stores the bytes under `key` (keys are ours, never a person's file name). */
  put(key: string, body: Buffer, contentType: string): Promise<void>;
  /** The bytes as a stream, or null when nothing is stored under `key`. */
  get(key: string): Promise<Readable | null>;
  remove(key: string): Promise<void>;
  /** Throws when the store cannot be reached within `timeoutMs`. */
  check(timeoutMs?: number): Promise<void>;
}

function bucketStorage(config: Config): ObjectStorage {
  // The SDK is large: loaded on first use, so a server without a bucket never pays for it.
  let loaded: Promise<{ client: S3Client; sdk: typeof import('@aws-sdk/client-s3') }> | null = null;
  const s3 = () =>
    (loaded ??= import('@aws-sdk/client-s3').then((sdk) => ({
      sdk,
      client: new sdk.S3Client({
        endpoint: config.S3_URL,
        region: config.S3_REGION,
        // Self-hosted stores and the local fake answer on one host name, the bucket in the path.
        forcePathStyle: config.S3_PATH_STYLE === 'on',
        credentials: config.S3_ACCESS_KEY_ID && config.S3_SECRET_ACCESS_KEY ? { accessKeyId: config.S3_ACCESS_KEY_ID, secretAccessKey: config.S3_SECRET_ACCESS_KEY } : undefined,
        // Checksums only where the protocol needs them: S3-compatible stores do not all take the newer ones.
        requestChecksumCalculation: 'WHEN_REQUIRED',
        responseChecksumValidation: 'WHEN_REQUIRED',
        maxAttempts: 2,
      }),
    })));
  const Bucket = config.S3_BUCKET;
  return {
    kind: 'bucket',
    async put(key, body, contentType) {
      const { client, sdk } = await s3();
      await client.send(new sdk.PutObjectCommand({ Bucket, Key: key, Body: body, ContentType: contentType, ContentLength: body.length }));
    },
    async get(key) {
      const { client, sdk } = await s3();
      try {
        const res = await client.send(new sdk.GetObjectCommand({ Bucket, Key: key }));
        return (res.Body as Readable | undefined) ?? null;
      } catch (err) {
        if ((err as { name?: string }).name === 'NoSuchKey') return null;
        throw err;
      }
    },
    async remove(key) {
      const { client, sdk } = await s3();
      await client.send(new sdk.DeleteObjectCommand({ Bucket, Key: key }));
    },
    async check(timeoutMs = 3_000) {
      const { client, sdk } = await s3();
      await client.send(new sdk.HeadBucketCommand({ Bucket }), { abortSignal: AbortSignal.timeout(timeoutMs) });
    },
  };
}

function folderStorage(dir: string): ObjectStorage {
  const root = resolve(dir);
  const pathOf = (key: string) => {
    const path = resolve(root, key);
    if (!path.startsWith(root + sep)) throw new Error('a storage key left the upload folder');
    return path;
  };
  return {
    kind: 'folder',
    async put(key, body) {
      const path = pathOf(key);
      await mkdir(dirname(path), { recursive: true, mode: 0o700 });
      // 'wx': never overwrite; a name collision fails instead of replacing someone's evidence.
      await writeFile(path, body, { flag: 'wx', mode: 0o600 });
    },
    async get(key) {
      try {
        const handle = await open(pathOf(key), 'r');
        return handle.createReadStream();
      } catch (err) {
        if ((err as NodeJS.ErrnoException).code === 'ENOENT') return null;
        throw err;
      }
    },
    async remove(key) {
      await rm(pathOf(key), { force: true });
    },
    async check() {
      await mkdir(root, { recursive: true, mode: 0o700 });
    },
  };
}

const stores = new WeakMap<Config, ObjectStorage>();

/** The storage of this configuration, made once. */
export function objectStorage(config: Config): ObjectStorage {
  let store = stores.get(config);
  if (!store) {
    store = config.S3_URL ? bucketStorage(config) : folderStorage(config.UPLOAD_DIR);
    stores.set(config, store);
  }
  return store;
}
