import { hash, verify } from "@node-rs/argon2";

// argon2id with m=19456 KiB, t=2, p=1: the OWASP Password Storage Cheat Sheet minimum, spelled out so a
// library default change cannot silently weaken it. (The Algorithm enum is const and absent at run time; the
// library's default algorithm is argon2id.)
export const ARGON2_OPTIONS = { memoryCost: 19456, timeCost: 2, parallelism: 1, outputLen: 32 } as const;

export function hashPassword(password: string) {
  return hash(password, ARGON2_OPTIONS);
}

export async function verifyPassword(passwordHash: string, password: string) {
  try {
    return await verify(passwordHash, password);
  } catch {
    return false;
  }
}

// Verifying against this when the account does not exist keeps the timing of both answers alike.
let dummyHash: Promise<string> | undefined;
export function dummyVerify(password: string) {
  dummyHash ??= hashPassword("railwise-timing-equaliser");
  return dummyHash.then((h) => verifyPassword(h, password));
}
