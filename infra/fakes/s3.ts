import crypto from 'node:crypto';
import fs from 'node:fs';
import type { AddressInfo } from 'node:net';
import S3rver from 's3rver';
import { closeOnSignals, exitWith, isMain, portFlag, readFlags } from './cli.js';
import { S3_FAKE_NODE_OPTIONS } from '../lib/s3-fake-env.js';

/**
 * The S3-compatible object store for development and tests: s3rver, with the project's bucket
 * created at start. CORS allows GET from any origin so the viewer may fetch tiles straight from
 * presigned URLs. Clients must use forcePathStyle and the WHEN_REQUIRED checksum settings (see
 * infra/README.md): with the SDK defaults, stream uploads are stored aws-chunked.
 */

/** Whether this process can page listings (infra/lib/s3-fake-env.ts: s3rver's tokens need OpenSSL's legacy provider). */
export function canPageListings(): boolean {
  try {
    crypto.createCipheriv('des', Buffer.alloc(8), Buffer.alloc(8));
    return true;
  } catch {
    return false;
  }
}

export interface S3FakeOptions {
  host?: string;
  /** 0 picks a free port */
  port?: number;
  /** where objects are kept on disk; kept across restarts */
  directory: string;
  bucket?: string;
}

export interface S3Fake {
  port: number;
  /** http://host:port, the value for S3_ENDPOINT */
  endpoint: string;
  close(): Promise<void>;
}

const CORS = `<CORSConfiguration>
  <CORSRule>
    <AllowedOrigin>*</AllowedOrigin>
    <AllowedMethod>GET</AllowedMethod>
    <AllowedMethod>HEAD</AllowedMethod>
    <AllowedHeader>*</AllowedHeader>
    <ExposeHeader>ETag</ExposeHeader>
    <MaxAgeSeconds>3000</MaxAgeSeconds>
  </CORSRule>
</CORSConfiguration>`;

export async function startS3Fake(opts: S3FakeOptions): Promise<S3Fake> {
  const host = opts.host ?? '127.0.0.1';
  const bucket = opts.bucket ?? 'toppleworks';
  if (bucket.length < 3) throw new Error(`bucket name '${bucket}' is too short: S3 needs 3 to 63 characters`);
  fs.mkdirSync(opts.directory, { recursive: true });
  const server = new S3rver({
    address: host,
    port: opts.port ?? 0,
    silent: true,
    directory: opts.directory,
    configureBuckets: [{ name: bucket, configs: [CORS] }],
  });
  const address: AddressInfo = await server.run();
  return {
    port: address.port,
    endpoint: `http://${host}:${address.port}`,
    close: () => server.close(),
  };
}

if (isMain(import.meta.url)) {
  const flags = readFlags(['host', 'port', 'dir', 'bucket']);
  if (!flags.dir) exitWith(2, 'usage: s3.ts --dir FOLDER [--port 14569] [--host 127.0.0.1] [--bucket toppleworks]');
  try {
    const fake = await startS3Fake({ host: flags.host, port: portFlag(flags, 'port', 14569), directory: flags.dir, bucket: flags.bucket });
    console.log(`s3 fake: ${fake.endpoint}, bucket ${flags.bucket ?? 'toppleworks'}, data in ${flags.dir}`);
    if (!canPageListings()) console.error(`s3 fake: listings of more than 1,000 objects will fail: start it with NODE_OPTIONS=${S3_FAKE_NODE_OPTIONS}`);
    closeOnSignals(() => fake.close());
  } catch (err) {
    exitWith(1, `s3 fake: cannot start: ${(err as Error).message}`);
  }
}
