/**
 * A local fake of S3 for tests: s3rver (npm, pure JavaScript) on 127.0.0.1
 * and a free port, keeping its objects in a temporary folder, with one bucket.
 * `env` holds the settings that point Cayline's S3 driver at it
 * (server/storage/fileStore.ts, storeSettingsFromEnv).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import S3rver from 's3rver';
import type { StoreSettings } from '../../server/storage/fileStore';

export interface S3Fake {
  endpoint: string;
  bucket: string;
  /** Environment for a Cayline process using this fake (CAYLINE_STORE=s3 …). */
  env: Record<string, string>;
  settings: Extract<StoreSettings, { driver: 's3' }>;
  close(): Promise<void>;
}

export async function startS3Fake(bucket = 'cayline-test'): Promise<S3Fake> {
  // this Node 20 is supported by the SDK version the lock pins; the notice about later versions is noise in test output
  process.env.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED ??= 'true';
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-s3-'));
  const server = new S3rver({ port: 0, address: '127.0.0.1', silent: true, directory: dir, configureBuckets: [{ name: bucket, configs: [] }] });
  const { port } = (await server.run()) as { port: number };
  const endpoint = `http://127.0.0.1:${port}`;
  // s3rver accepts any signature made with its documented default key pair
  const credentials = { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' };
  return {
    endpoint,
    bucket,
    env: {
      CAYLINE_STORE: 's3',
      CAYLINE_S3_ENDPOINT: endpoint,
      CAYLINE_S3_BUCKET: bucket,
      CAYLINE_S3_REGION: 'us-east-1',
      CAYLINE_S3_FORCE_PATH_STYLE: 'true',
      CAYLINE_S3_ACCESS_KEY_ID: credentials.accessKeyId,
      CAYLINE_S3_SECRET_ACCESS_KEY: credentials.secretAccessKey,
      AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: 'true',
    },
    settings: { driver: 's3', bucket, region: 'us-east-1', endpoint, forcePathStyle: true, credentials, prefix: '' },
    async close() {
      await server.close();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}
