import { readFile } from 'node:fs/promises';
import { CliInputError } from './errors.js';

/** Read a user-named input file, turning fs errors into one readable line. */
export async function readInputFile(path: string, role: string): Promise<Uint8Array> {
  try {
    return await readFile(path);
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'is a directory' : code === 'EACCES' ? 'permission denied' : (error as Error).message;
    throw new CliInputError(`cannot read ${role} ${path}: ${why}`);
  }
}
