/**
 * A local SMTP server for development and tests: it accepts every message on
 * loopback and files it in the outbox table, which the admin's outbox page shows.
 */
import { simpleParser } from 'mailparser';
import { SMTPServer } from 'smtp-server';
import type { Db } from '../db/client.ts';
import { outbox } from '../db/schema.ts';

export interface SmtpFake {
  port: number;
  close(): Promise<void>;
}

export async function startSmtpFake(db: Db, port = 0): Promise<SmtpFake> {
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    size: 1_000_000,
    onData(stream, session, callback) {
      simpleParser(stream)
        .then(async (parsed) => {
          const to = session.envelope.rcptTo.map((r) => r.address).join(', ');
          await db.insert(outbox).values({
            toAddress: to.slice(0, 254),
            subject: (parsed.subject ?? '(no subject)').slice(0, 300),
            body: parsed.text ?? '',
            status: 'delivered',
            sentAt: new Date(),
          });
          callback();
        })
        .catch((err: Error) => callback(err));
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(port, '127.0.0.1', () => resolve());
  });
  const address = server.server.address();
  const bound = typeof address === 'object' && address ? address.port : port;
  return { port: bound, close: () => new Promise<void>((resolve) => server.close(() => resolve())) };
}
