/**
 * The demo seed: the invented school's people (and, from their own modules,
 * its classes and scenario library). Runs only on an empty database.
 */
import { sql } from 'drizzle-orm';
import { hashPassword } from '../accounts/passwords.ts';
import type { Db } from '../db/client.ts';
import { DEMO_PASSWORD, DEMO_PEOPLE } from '../db/demo-people.ts';
import { users } from '../db/schema.ts';
import { seedLibrary } from './seed-library.ts';

export async function isEmpty(db: Db): Promise<boolean> {
  const [row] = await db.select({ n: sql<number>`count(*)::int` }).from(users);
  return (row?.n ?? 0) === 0;
}

export async function seedDemo(db: Db): Promise<void> {
  // One hash serves every demo account: they share the demo password.
  const hash = await hashPassword(DEMO_PASSWORD);
  await db.transaction(async (tx) => {
    await tx.insert(users).values(DEMO_PEOPLE.map((p) => ({ email: p.email, name: p.name, role: p.role, passwordHash: hash })));
  });
  await seedLibrary(db);
}
