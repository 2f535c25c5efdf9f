import nodemailer from 'nodemailer';
import type { Mailer } from '../context.ts';

/** SMTP through nodemailer; in development and tests the SMTP server is the local fake. */
export function smtpMailer(opts: { host: string; port: number; from: string }): Mailer {
  const transport = nodemailer.createTransport({
    host: opts.host,
    port: opts.port,
    secure: false,
    ignoreTLS: opts.host === '127.0.0.1' || opts.host === 'localhost',
    connectionTimeout: 5_000,
  });
  return {
    async send(mail) {
      if (!opts.port) throw new Error('No SMTP server is configured (SMTP_PORT)');
      await transport.sendMail({ from: opts.from, to: mail.to, subject: mail.subject, text: mail.text });
    },
  };
}
