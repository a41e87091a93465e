/**
 * s3rver encrypts ListObjectsV2 continuation tokens with single DES, which OpenSSL 3 (Node 17+)
 * keeps in its legacy provider: without it every truncated listing (more than 1,000 keys, or more
 * than MaxKeys) answers 500 InternalError. The fake's process therefore runs with this flag
 * (infra/lib/stack.ts, tests/faults/support/services.ts); the product itself never needs it.
 */
export const S3_FAKE_NODE_OPTIONS = '--openssl-legacy-provider';

/** The environment for a child process running the fake: NODE_OPTIONS gains S3_FAKE_NODE_OPTIONS. */
export function s3FakeEnv(env: NodeJS.ProcessEnv): NodeJS.ProcessEnv {
  const options = env.NODE_OPTIONS ?? '';
  return { ...env, NODE_OPTIONS: options.includes(S3_FAKE_NODE_OPTIONS) ? options : `${options} ${S3_FAKE_NODE_OPTIONS}`.trim() };
}
