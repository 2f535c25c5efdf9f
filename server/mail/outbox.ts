import { desc } from 'drizzle-orm';
import type { DbOrTx } from '../db/client.ts';
import { outbox } from '../db/schema.ts';

/** The latest 200 messages of the outbox, newest first. */
export async function recentMail(db: DbOrTx) {
  const rows = await db
    .select({ id: outbox.id, to: outbox.toAddress, subject: outbox.subject, body: outbox.body, status: outbox.status, sentAt: outbox.sentAt, createdAt: outbox.createdAt })
    .from(outbox)
    .orderBy(desc(outbox.id))
    .limit(200);
  return rows.map((m) => ({ ...m, sentAt: m.sentAt?.toISOString() ?? null, createdAt: m.createdAt.toISOString() }));
}
