import argon2 from 'argon2';

// OWASP Password Storage cheat sheet: argon2id, m = 19 MiB (19456 KiB), t = 2, p = 1.
export const ARGON2_OPTIONS = { type: argon2.argon2id, memoryCost: 19456, timeCost: 2, parallelism: 1 } as const;

export function hashPassword(password: string): Promise<string> {
  return argon2.hash(password, ARGON2_OPTIONS);
}

export async function verifyPassword(hash: string, password: string): Promise<boolean> {
  try {
    return await argon2.verify(hash, password);
  } catch {
    return false;
  }
}

// Verifying against this when the e-mail is unknown keeps the answer time the same as a bad password.
let dummyHash: Promise<string> | undefined;
export function dummyVerify(password: string): Promise<boolean> {
  dummyHash ??= hashPassword('no-such-account-placeholder');
  return dummyHash.then((h) => verifyPassword(h, password)).then(() => false);
}
