// argon2id password hashing (OWASP's recommended parameters: 19 MiB, 2 passes, 1 lane).
import { hash, verify } from "@node-rs/argon2";

const OPTIONS = { memoryCost: 19456, timeCost: 2, parallelism: 1, outputLen: 32 } as const;
// A hash of a throw-away password so that unknown e-mails cost the same time as known ones.
let dummyHash: Promise<string> | undefined;

export function hashPassword(password: string) {
  return hash(password, OPTIONS);
}

export async function verifyPassword(passwordHash: string | null, password: string) {
  if (!passwordHash) {
    await verify(await (dummyHash ??= hash("not-a-real-password", OPTIONS)), password);
    return false;
  }
  try {
    return await verify(passwordHash, password);
  } catch {
    return false;
  }
}
