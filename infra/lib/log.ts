/** One voice for the orchestrators' messages, so `npm start` output reads as one list. */
const tag = (profile: string) => `[${profile}]`;

export function makeLog(profile: string) {
  return {
    info: (msg: string): void => void process.stdout.write(`${tag(profile)} ${msg}\n`),
    warn: (msg: string): void => void process.stdout.write(`${tag(profile)} warning: ${msg}\n`),
    error: (msg: string): void => void process.stderr.write(`${tag(profile)} error: ${msg}\n`),
  };
}
export type Log = ReturnType<typeof makeLog>;

/** An expected failure with a one-line message for the user; the orchestrator exits non-zero without a stack. */
export class InfraError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'InfraError';
  }
}
