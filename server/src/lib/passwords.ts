import { hash, verify } from '@node-rs/argon2';

// argon2id (the library default) with OWASP's second recommended setting: 19 MiB, 2 passes.
const options = { memoryCost: 19_456, timeCost: 2, parallelism: 1 } as const;

export const hashPassword = (password: string) => hash(password, options);

// A fixed hash to verify against when the account does not exist, so timing does not reveal it.
let dummyHash: Promise<string> | null = null;

export async function verifyPassword(passwordHash: string | null | undefined, password: string): Promise<boolean> {
  if (!passwordHash) {
    dummyHash ??= hash('not-a-real-password', options);
    await verify(await dummyHash, password).catch(() => false);
    return false;
  }
  return verify(passwordHash, password).catch(() => false);
}
