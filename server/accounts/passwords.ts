import bcrypt from 'bcryptjs';

export const BCRYPT_COST = 12;

export function hashPassword(plain: string): Promise<string> {
  return bcrypt.hash(plain, BCRYPT_COST);
}

// Compared against when the e-mail is unknown, so a miss costs as long as a hit.
const DUMMY_HASH = bcrypt.hashSync('not-a-real-password-ever', BCRYPT_COST);

export function verifyPassword(plain: string, hash: string | null): Promise<boolean> {
  return bcrypt.compare(plain, hash ?? DUMMY_HASH).then((ok) => ok && hash !== null);
}
