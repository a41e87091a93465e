import type { Response } from 'express';
import { FINAL_RUN_STATUSES, RUN_EVENT_NAMES, runEventSchema, type Run } from '../../../shared/api/runs.js';

const HEARTBEAT_MS = 15_000;

export type RunEventOptions = {
  /** how often PostgreSQL is read (default 1 s) */
  pollMs?: number;
  /** the stream ends after this long even if the run goes on; EventSource reconnects by itself (default 30 min) */
  maxMs?: number;
};

/**
 * Server-sent events for one run: a `run` event whenever what the page shows changes, `end` once the
 * run is final. Polling keeps PostgreSQL the only source of truth (no second channel to disagree with).
 */
export function streamRunEvents(res: Response, load: () => Promise<Run | null>, options: RunEventOptions = {}): void {
  const pollMs = options.pollMs ?? 1000;
  const maxMs = options.maxMs ?? 30 * 60 * 1000;
  res.status(200).set({
    'Content-Type': 'text/event-stream; charset=utf-8',
    'Cache-Control': 'no-store',
    Connection: 'keep-alive',
    // proxies such as nginx would otherwise hold the events back
    'X-Accel-Buffering': 'no',
  });
  res.flushHeaders();
  res.write(`retry: ${Math.max(pollMs, 1000)}\n\n`);
  const started = Date.now();
  let last = '';
  let lastWrite = Date.now();
  const write = (chunk: string) => {
    res.write(chunk);
    lastWrite = Date.now();
  };
  let timer: NodeJS.Timeout | null = null;
  let closed = false;
  const finish = () => {
    if (closed) return;
    closed = true;
    if (timer) clearTimeout(timer);
    res.end();
  };
  // the response closes when the reader goes away (or when we end it)
  res.on('close', finish);

  const tick = async () => {
    timer = null;
    if (closed) return;
    // the database briefly away (undefined): say nothing and try again; the client keeps the last state
    const run = await load().catch(() => undefined);
    if (closed) return;
    if (run === null) {
      write(`event: ${RUN_EVENT_NAMES.end}\ndata: ${JSON.stringify({ reason: 'deleted' })}\n\n`);
      return finish();
    }
    if (run) {
      const payload = JSON.stringify(runEventSchema.parse({ run }));
      if (payload !== last) {
        last = payload;
        write(`event: ${RUN_EVENT_NAMES.change}\ndata: ${payload}\n\n`);
      }
      if (FINAL_RUN_STATUSES.includes(run.status)) {
        write(`event: ${RUN_EVENT_NAMES.end}\ndata: ${JSON.stringify({ status: run.status })}\n\n`);
        return finish();
      }
    }
    if (Date.now() - started > maxMs) return finish();
    // a comment line now and then, so proxies do not cut a quiet stream (a long run may not move for minutes)
    if (Date.now() - lastWrite > HEARTBEAT_MS) write(': still here\n\n');
    timer = setTimeout(() => void tick(), pollMs);
  };
  void tick();
}
