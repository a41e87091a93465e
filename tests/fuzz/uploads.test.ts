import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { deflateSync } from 'node:zlib';
import fc from 'fast-check';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CSRF_HEADER } from '../../shared/api/auth.js';
import { UPLOAD_MAX_BYTES, UPLOAD_MAX_SIDE } from '../../shared/api/uploads.js';
import { createLab, createUser, signIn, TEST_PASSWORD, type Session } from '../api/support/harness.js';
import { intBody, npyBytes } from '../api/support/npy-bytes.js';
import { startPrivateApp, type PrivateApp, type Snapshot } from './support/private-app.js';

/**
 * Every kind of bad file at POST /api/uploads/background, and unsigned or forged bodies at the
 * payment webhook: each gets a 4xx with a message, and no row, object or job appears.
 * Files are built from the formats' specifications: .npy by NumPy's "numpy.lib.format" 1.0
 * (tests/api/support/npy-bytes.ts), PNG by RFC 2083 / ISO 15948 (signature, IHDR layout, CRC-32)
 * or by sharp.
 */

const SEED = Number(process.env.FUZZ_SEED ?? 20261202);
let h: PrivateApp;
let s: Session;
let labId: string;
let agent: http.Agent;
let baseline: Snapshot;
let tried = 0;

beforeAll(async () => {
  h = await startPrivateApp('fuzz-uploads');
  agent = new http.Agent({ keepAlive: false });
  const u = await createUser(h, 'Upload Fuzzer');
  s = await signIn(h, u.email, TEST_PASSWORD);
  labId = await createLab(h, 'Upload Fuzz Lab', [{ userId: u.id, role: 'author' }]);
  baseline = await h.snapshot();
});
afterAll(async () => {
  console.log(`upload fuzz (seed ${SEED}): ${tried} bad files and webhook bodies tried`);
  agent?.destroy();
  await h?.close();
});

type Answer = { status: number; body: { error?: unknown } };

/** POST a body; a server that answers before reading everything (413 on Content-Length) may cut the upload short. */
function post(path: string, body: Buffer | (() => AsyncIterable<Buffer>), headers: Record<string, string>): Promise<Answer> {
  const { port } = h.server.address() as AddressInfo;
  return new Promise((resolve, reject) => {
    const all = { Cookie: s.cookie, [CSRF_HEADER]: s.csrf, ...headers, ...(Buffer.isBuffer(body) ? { 'Content-Length': String(body.length) } : {}) };
    const req = http.request({ host: '127.0.0.1', port, method: 'POST', path, headers: all, agent }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => {
        const text = Buffer.concat(chunks).toString('utf8');
        try {
          resolve({ status: res.statusCode!, body: JSON.parse(text) });
        } catch {
          resolve({ status: res.statusCode!, body: { error: undefined } });
        }
      });
    });
    let answered = false;
    req.on('response', () => (answered = true));
    req.on('error', (err) => (answered ? undefined : reject(err)));
    if (Buffer.isBuffer(body)) req.end(body);
    else
      void (async () => {
        for await (const chunk of body()) if (!req.write(chunk)) await new Promise((r) => req.once('drain', r));
        req.end();
      })().catch(() => undefined);
  });
}

async function expectRefused(body: Buffer | (() => AsyncIterable<Buffer>), contentType: string, what: string, status?: number | RegExp, extra: Record<string, string> = {}) {
  tried++;
  const res = await post(`/api/uploads/background?labId=${labId}`, body, { 'Content-Type': contentType, ...extra });
  expect(res.status, `${what}: ${JSON.stringify(res.body)}`).toBeGreaterThanOrEqual(400);
  expect(res.status, what).toBeLessThan(500);
  if (typeof status === 'number') expect(res.status, what).toBe(status);
  expect(typeof res.body.error, what).toBe('string');
  if (status instanceof RegExp) expect(res.body.error, what).toMatch(status);
  expect(await h.snapshot(), `${what}: nothing stored`).toEqual(baseline);
  expect(await h.jobCount(), what).toBe(0);
  return res;
}

// CRC-32 (ISO 3309 / RFC 2083 §15) over a chunk's type and data
const CRC_TABLE = Array.from({ length: 256 }, (_, n) => {
  let c = n;
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  return c >>> 0;
});
function crc32(buf: Buffer): number {
  let c = 0xffffffff;
  for (const b of buf) c = CRC_TABLE[(c ^ b) & 0xff]! ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}
function chunk(type: string, data: Buffer): Buffer {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const td = Buffer.concat([Buffer.from(type, 'latin1'), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(td));
  return Buffer.concat([len, td, crc]);
}
const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
/** A grayscale 8-bit PNG whose IHDR claims width × height, with a tiny (wrong) IDAT: a decompression-bomb header. */
function pngClaiming(width: number, height: number): Buffer {
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = 8; // bit depth
  ihdr[9] = 0; // colour type: grayscale
  return Buffer.concat([PNG_SIGNATURE, chunk('IHDR', ihdr), chunk('IDAT', deflateSync(Buffer.alloc(64))), chunk('IEND', Buffer.alloc(0))]);
}

let goodPng: Buffer;
const goodNpy = npyBytes('<i4', [16, 16], intBody(Array.from({ length: 256 }, (_, k) => k % 4), 4));

describe('bad files at POST /api/uploads/background', () => {
  beforeAll(async () => {
    goodPng = await sharp(Buffer.from(Array.from({ length: 32 * 32 }, (_, k) => k % 3)), { raw: { width: 32, height: 32, channels: 1 } }).png().toBuffer();
  });

  it('refuses a body over the size limit, announced or streamed, with 413', { timeout: 60_000 }, async () => {
    const big = Buffer.alloc(UPLOAD_MAX_BYTES + 1024);
    goodNpy.copy(big);
    await expectRefused(big, 'application/octet-stream', 'announced oversize', 413);
    // no Content-Length: the parser counts while reading and stops at the limit
    const slice = Buffer.alloc(1024 * 1024);
    await expectRefused(
      async function* () {
        for (let k = 0; k < 66; k++) yield slice;
      },
      'application/octet-stream',
      'chunked oversize',
      413,
    );
  });

  it('refuses content that is not what its name or type says, checked by content', async () => {
    const jpeg = await sharp({ create: { width: 8, height: 8, channels: 3, background: '#808080' } }).jpeg().toBuffer();
    const gif = Buffer.from('GIF89a\x01\x00\x01\x00\x80\x00\x00\x00\x00\x00\xff\xff\xff!\xf9\x04\x01\x00\x00\x00\x00,\x00\x00\x00\x00\x01\x00\x01\x00\x00\x02\x02D\x01\x00;', 'latin1');
    const named = { 'Content-Disposition': 'attachment; filename="background.png"', 'X-File-Name': 'background.npy' };
    for (const [body, what] of [[jpeg, 'a JPEG'], [gif, 'a GIF'], [Buffer.from('PK\x03\x04 zip', 'latin1'), 'a ZIP'], [Buffer.from('{"heights": [[0]]}'), 'JSON text'], [Buffer.from('0,1,2\n3,4,5\n'), 'CSV text']] as const) {
      await expectRefused(body, 'image/png', `${what} sent as image/png`, 415, named);
      await expectRefused(body, 'application/octet-stream', `${what} sent as octet-stream`, 415, named);
    }
    // right bytes, wrong declared type: the type is refused before the body is read
    await expectRefused(goodPng, 'text/plain', 'PNG as text/plain', 415);
    await expectRefused(goodNpy, 'multipart/form-data; boundary=x', 'npy as multipart', 415);
    // a PNG that is not 8-bit grayscale
    const rgb = await sharp({ create: { width: 4, height: 4, channels: 3, background: '#102030' } }).png().toBuffer();
    await expectRefused(rgb, 'image/png', 'an RGB PNG', 400);
    const sixteen = await sharp(Buffer.alloc(4 * 4 * 2, 1), { raw: { width: 4, height: 4, channels: 1 } }).toColourspace('grey16').png().toBuffer();
    await expectRefused(sixteen, 'image/png', 'a 16-bit PNG', 400);
  });

  it('refuses huge dimensions before decoding, with 413', async () => {
    await expectRefused(pngClaiming(UPLOAD_MAX_SIDE + 1, 16), 'image/png', 'a PNG wider than the limit', 413);
    await expectRefused(pngClaiming(100_000, 100_000), 'image/png', 'a 10^10-pixel PNG header', 413);
    await expectRefused(pngClaiming(0xffffffff, 0xffffffff), 'image/png', 'a PNG claiming 2^32−1 per side', 413);
    await expectRefused(npyBytes('|u1', [UPLOAD_MAX_SIDE + 1, 2], Buffer.alloc((UPLOAD_MAX_SIDE + 1) * 2)), 'application/octet-stream', 'an .npy axis over the limit', 413);
    // a header promising more than a body under the limit can hold: refused as truncated, naming the shape
    await expectRefused(npyBytes('|u1', [8192, 8192, 2], Buffer.alloc(0)), 'application/octet-stream', 'an .npy header of 2^27 cells', /shape \(8192, 8192, 2\)/);
    await expectRefused(npyBytes('|u1', [2 ** 40], Buffer.alloc(0)), 'application/octet-stream', 'an .npy header of 2^40 cells', /shape \(1099511627776\)/);
  });

  it('refuses truncated .npy and PNG files cut at generated points, with 400', { timeout: 60_000 }, async () => {
    const cuts = fc.sample(fc.tuple(fc.integer({ min: 1, max: goodNpy.length - 1 }), fc.integer({ min: 9, max: goodPng.length - 1 })), { seed: SEED, numRuns: 30 });
    for (const [n, p] of cuts) {
      // shorter than magic + header + shape × itemsize: never a valid .npy (numpy.lib.format 1.0)
      await expectRefused(goodNpy.subarray(0, n), 'application/octet-stream', `.npy cut at ${n} of ${goodNpy.length}`);
      // a PNG cut before IEND (RFC 2083 §4.1.4 requires it last)
      await expectRefused(goodPng.subarray(0, p), 'image/png', `PNG cut at ${p} of ${goodPng.length}`);
    }
  });

  it('refuses generated .npy headers that break the format or our limits', { timeout: 60_000 }, async () => {
    const dtypes = ['<f8', '<f4', '|O', '<c16', '<U3', '|S4', '<M8[s]', '|V8', '>f2', 'int32', ''];
    const shapes: number[][] = [[0], [0, 4], [2, 2, 2, 2], [-1, 4], []];
    for (const descr of dtypes) await expectRefused(npyBytes(descr, [2, 2], Buffer.alloc(64)), 'application/octet-stream', `dtype ${JSON.stringify(descr)}`);
    for (const shape of shapes) await expectRefused(npyBytes('<i4', shape, Buffer.alloc(64)), 'application/octet-stream', `shape (${shape.join(',')})`);
    // negative heights, and values beyond int32 in an int64 file
    await expectRefused(npyBytes('<i4', [2, 2], intBody([0, 1, -1, 2], 4)), 'application/octet-stream', 'a negative height', 400);
    await expectRefused(npyBytes('<i8', [1, 2], intBody([0, 2 ** 40], 8)), 'application/octet-stream', 'a height over 2^31', 400);
    // generated garbage after a right magic
    const tails = fc.sample(fc.uint8Array({ minLength: 0, maxLength: 200 }), { seed: SEED + 1, numRuns: 25 });
    for (const tail of tails) {
      await expectRefused(Buffer.concat([Buffer.from([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]), Buffer.from(tail)]), 'application/octet-stream', `npy magic + ${tail.length} random bytes`);
      await expectRefused(Buffer.concat([PNG_SIGNATURE, Buffer.from(tail)]), 'image/png', `PNG signature + ${tail.length} random bytes`);
    }
  });
});

describe('unsigned and forged payment webhooks', () => {
  it('are refused with 400 and change nothing', async () => {
    const bodies = fc.sample(
      fc.oneof(
        fc.constant(JSON.stringify({ id: 'evt_forged', type: 'checkout.session.completed', data: { object: { id: 'cs_x', client_reference_id: labId, payment_status: 'paid' } } })),
        fc.json(),
        fc.string(),
      ),
      { seed: SEED + 2, numRuns: 20 },
    );
    const signatures = [undefined, '', 'garbage', `t=${Math.floor(Date.now() / 1000)},v1=${'0'.repeat(64)}`, 't=1,v1=abc', `v1=${'f'.repeat(64)}`];
    for (const [k, body] of bodies.entries()) {
      const sig = signatures[k % signatures.length];
      tried++;
      const res = await post('/api/payments/webhook', Buffer.from(body), { 'Content-Type': 'application/json', ...(sig === undefined ? {} : { 'Stripe-Signature': sig }) });
      expect(res.status, `signature ${sig}: ${JSON.stringify(res.body)}`).toBe(400);
      expect(typeof res.body.error).toBe('string');
      expect(await h.snapshot()).toEqual(baseline);
    }
  });
});
