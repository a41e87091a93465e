import type { Env } from '../../shared/env.js';

export type LogFields = Record<string, unknown>;
export interface Logger {
  info(message: string, fields?: LogFields): void;
  warn(message: string, fields?: LogFields): void;
  error(message: string, fields?: LogFields): void;
}

const LEVELS = ['debug', 'info', 'warn', 'error', 'silent'] as const;

function serialise(fields: LogFields): LogFields {
  const out: LogFields = {};
  for (const [k, v] of Object.entries(fields)) out[k] = v instanceof Error ? { name: v.name, message: v.message, stack: v.stack } : v;
  return out;
}

/** One JSON line per event on stderr; quiet below LOG_LEVEL. */
export function createLogger(level: Env['LOG_LEVEL']): Logger {
  const min = LEVELS.indexOf(level);
  const write = (lvl: (typeof LEVELS)[number]) => (message: string, fields: LogFields = {}) => {
    if (LEVELS.indexOf(lvl) < min) return;
    process.stderr.write(`${JSON.stringify({ time: new Date().toISOString(), level: lvl, message, ...serialise(fields) })}\n`);
  };
  return { info: write('info'), warn: write('warn'), error: write('error') };
}
