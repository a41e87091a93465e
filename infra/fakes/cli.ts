import { parseArgs } from 'node:util';
import { pathToFileURL } from 'node:url';

/** True when the module at `moduleUrl` is the process's entry point (run as a script, not imported). */
export function isMain(moduleUrl: string): boolean {
  const entry = process.argv[1];
  return entry !== undefined && pathToFileURL(entry).href === moduleUrl;
}

/**
 * Parse `--name value` flags; every flag is a string, ports are checked by portFlag().
 * A bad flag ends the process with a one-line message and exit code 2.
 */
export function readFlags(names: string[]): Record<string, string | undefined> {
  try {
    const { values } = parseArgs({
      options: Object.fromEntries(names.map((n) => [n, { type: 'string' as const }])),
      strict: true,
      allowPositionals: false,
    });
    return values as Record<string, string | undefined>;
  } catch (err) {
    exitWith(2, (err as Error).message);
  }
}

export function portFlag(flags: Record<string, string | undefined>, name: string, fallback: number): number {
  const raw = flags[name];
  if (raw === undefined) return fallback;
  const port = Number(raw);
  if (!Number.isInteger(port) || port < 0 || port > 65535) exitWith(2, `--${name} must be a port number 0..65535, got '${raw}'`);
  return port;
}

export function exitWith(code: number, message: string): never {
  process.stderr.write(`${message}\n`);
  process.exit(code);
}

/** Run `close` once on SIGINT/SIGTERM, then exit; a second signal exits at once. */
export function closeOnSignals(close: () => Promise<void>): void {
  let closing = false;
  const onSignal = () => {
    if (closing) process.exit(1);
    closing = true;
    close().then(
      () => process.exit(0),
      (err) => {
        process.stderr.write(`error while stopping: ${(err as Error).message}\n`);
        process.exit(1);
      },
    );
  };
  process.on('SIGINT', onSignal);
  process.on('SIGTERM', onSignal);
}
