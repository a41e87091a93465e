/**
 * Bad input to the CLI: the message is printed as one line on stderr and the exit code is 2
 * (usage or input problem). Engine refusals keep their own names and exit with 3.
 */
export class CliInputError extends Error {
  override name = 'CliInputError';
}

/** Exit codes are part of the scripting contract. */
export const EXIT = {
  ok: 0,
  /** bad arguments or unreadable/invalid input files */
  input: 2,
  /** the engine refused the problem (explodes, does not stabilize within limits) */
  engine: 3,
  /** interrupted (SIGINT/SIGTERM) */
  interrupted: 130,
  /** anything unexpected: a bug or an I/O failure while writing */
  internal: 1,
} as const;
