import type { Redis } from 'ioredis';

/**
 * BullMQ wants `maxRetriesPerRequest: null`, so while Redis is away every command waits in ioredis'
 * offline queue until it returns: a request handler awaiting one would hang for as long as the
 * outage lasts. The API's producers therefore give each call a short budget and fail fast with an
 * error `http/unavailable.ts` answers as 503 ("the job queue is not answering").
 */

/** How long an API call to Redis may take before the caller hears the queue is unavailable. */
export const QUEUE_CALL_MS = 1500;

export class QueueUnavailableError extends Error {
  readonly dependency = 'the job queue';
  /** a network code, so http/unavailable.ts maps it to 503 with Retry-After */
  readonly code: string;
  constructor(reason: string, code: 'ECONNREFUSED' | 'ETIMEDOUT') {
    super(`the job queue (Redis) is not answering: ${reason}`);
    this.name = 'QueueUnavailableError';
    this.code = code;
  }
}

/** Wait (at most `ms`) for a connection that is still making its first connection to be ready. */
async function ready(connection: Redis, ms: number): Promise<void> {
  if (connection.status === 'ready') return;
  if (connection.status === 'end' || connection.status === 'close') throw new QueueUnavailableError('the connection is closed', 'ECONNREFUSED');
  // a connection that was up and lost it: Redis is away now, there is nothing to wait for (callers retry later)
  if (connection.status === 'reconnecting') throw new QueueUnavailableError('the connection was lost and is being retried', 'ECONNREFUSED');
  await new Promise<void>((resolve, reject) => {
    const onReady = () => {
      clearTimeout(timer);
      resolve();
    };
    const timer = setTimeout(() => {
      connection.off('ready', onReady);
      reject(new QueueUnavailableError(`no connection within ${ms} ms`, 'ECONNREFUSED'));
    }, ms);
    connection.once('ready', onReady);
  });
}

/**
 * Run `call` against Redis within `ms`, or throw QueueUnavailableError. A call that timed out may
 * still reach Redis later (it sits in the offline queue): callers only use this for operations that
 * are idempotent (jobs are added under their own id) or whose late effect is harmless.
 */
export async function withinBudget<T>(connection: Redis, call: () => Promise<T>, ms = QUEUE_CALL_MS): Promise<T> {
  const start = Date.now();
  // a Redis that is away is known within one call's budget, even when the call itself may take longer
  await ready(connection, Math.min(ms, QUEUE_CALL_MS));
  let timer: NodeJS.Timeout | undefined;
  const late = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new QueueUnavailableError(`no answer within ${ms} ms`, 'ETIMEDOUT')), Math.max(1, ms - (Date.now() - start)));
  });
  try {
    return await Promise.race([call(), late]);
  } finally {
    clearTimeout(timer);
  }
}

/** Close a connection without waiting for a Redis that is away (quit would queue behind the outage). */
export async function closeConnection(connection: Redis): Promise<void> {
  if (connection.status === 'ready') await connection.quit().catch(() => connection.disconnect());
  else connection.disconnect();
}
