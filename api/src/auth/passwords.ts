import { hash, verify, type Algorithm, type Options } from '@node-rs/argon2';

/**
 * argon2id with the OWASP Password Storage Cheat Sheet's first recommended setting:
 * m = 19 MiB (19456 KiB), t = 2 iterations, p = 1 lane, 32-byte output (16-byte random salt
 * chosen by the library). Parameters are kept in the PHC string, so raising them later still
 * verifies old hashes.
 */
export const ARGON2_OPTIONS: Options = {
  // Algorithm is a const enum, which isolatedModules cannot read; 2 is Argon2id.
  algorithm: 2 as Algorithm,
  memoryCost: 19456,
  timeCost: 2,
  parallelism: 1,
  outputLen: 32,
};

export function hashPassword(password: string): Promise<string> {
  return hash(password, ARGON2_OPTIONS);
}

export async function verifyPassword(passwordHash: string, password: string): Promise<boolean> {
  try {
    return await verify(passwordHash, password);
  } catch {
    return false; // a malformed stored hash never signs anyone in
  }
}

/** Verifying against this keeps sign-in time the same whether or not the e-mail exists. */
let dummyHash: Promise<string> | null = null;
export function dummyPasswordHash(): Promise<string> {
  dummyHash ??= hashPassword('not-a-real-password-for-timing');
  return dummyHash;
}
