import argon2 from 'argon2';

// argon2id with the library's defaults (m = 64 MiB, t = 3, p = 4), as OWASP's password storage advice allows.
export const hashPassword = (plain: string) => argon2.hash(plain, { type: argon2.argon2id });

export async function verifyPassword(hash: string, plain: string): Promise<boolean> {
  try {
    return await argon2.verify(hash, plain);
  } catch {
    return false;
  }
}

/** A hash to verify against when the e-mail is unknown, so both paths take the same time. */
let decoy: Promise<string> | null = null;
export const decoyHash = () => (decoy ??= hashPassword('no-such-user-decoy'));
