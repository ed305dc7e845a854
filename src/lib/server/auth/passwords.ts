import { hash, verify } from "@node-rs/argon2";

// argon2id (the library's default algorithm) with the OWASP-recommended minimum cost:
// 19 MiB of memory, 2 passes, 1 lane.
const options = { memoryCost: 19_456, timeCost: 2, parallelism: 1, outputLen: 32 } as const;

export const MIN_PASSWORD_LENGTH = 10;

export function hashPassword(password: string): Promise<string> {
  return hash(password.normalize("NFKC"), options);
}

export async function verifyPassword(storedHash: string, password: string): Promise<boolean> {
  try {
    return await verify(storedHash, password.normalize("NFKC"));
  } catch {
    return false;
  }
}

let dummyHash: Promise<string> | undefined;

/**
 * Spends the same work as a real check, for an unknown e-mail, so that timing does not
 * tell which addresses have accounts.
 */
export async function verifyAgainstNothing(password: string): Promise<false> {
  dummyHash ??= hashPassword("plinth-no-such-account");
  await verifyPassword(await dummyHash, password);
  return false;
}

/** A readable one-time password for resets: 4 groups of 4 from an unambiguous alphabet. */
export function temporaryPassword(): string {
  const alphabet = "abcdefghjkmnpqrstuvwxyz23456789";
  const bytes = crypto.getRandomValues(new Uint8Array(16));
  let out = "";
  bytes.forEach((b, i) => {
    if (i > 0 && i % 4 === 0) out += "-";
    out += alphabet[b % alphabet.length];
  });
  return out;
}
