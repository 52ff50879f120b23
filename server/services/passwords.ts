import { hash, verify } from '@node-rs/argon2';

// argon2id (the library's default algorithm) with OWASP's suggested minimums: 19 MiB, 2 passes.
const OPTIONS = { memoryCost: 19_456, timeCost: 2, parallelism: 1 };

export const hashPassword = (password: string) => hash(password, OPTIONS);

let dummyHash: Promise<string> | undefined;

export async function verifyPassword(passwordHash: string | null, password: string) {
  if (!passwordHash) {
    // Spend the same time as a real check so unknown accounts cannot be told apart by timing.
    dummyHash ??= hash('no account has this password', OPTIONS);
    await verify(await dummyHash, password).catch(() => false);
    return false;
  }
  return verify(passwordHash, password).catch(() => false);
}
