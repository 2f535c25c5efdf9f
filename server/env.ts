/** The server's environment, validated once at boot. */
import { z } from 'zod';

/**
 * The session secret a development checkout runs with when none is given. It
 * is public (it is in this file), so production refuses it: `npm start`
 * generates a random secret on its first run (scripts/server-secret.ts).
 */
export const DEVELOPMENT_SESSION_SECRET = 'loadline-development-secret-change-me';
/** The shortest session secret production accepts: 32 characters (at least 128 bits as hex or base64). */
export const PRODUCTION_SECRET_MIN = 32;

const count = (fallback: number) => z.coerce.number().int().min(1).default(fallback);

const envSchema = z.object({
  NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
  DATABASE_URL: z.string().min(1, 'DATABASE_URL is required'),
  PORT: z.coerce.number().int().min(0).max(65535).default(5180),
  HOST: z.string().default('127.0.0.1'),
  /**
   * The address people open the app at (scheme, host, port and any path
   * prefix): every e-mailed link is built from it and never from a request's
   * Host header. Required in production; elsewhere http://localhost:PORT.
   */
  PUBLIC_URL: z
    .url({ protocol: /^https?$/, error: 'PUBLIC_URL must be an http or https address, e.g. https://loadline.example.edu' })
    .transform((u) => u.replace(/\/+$/, ''))
    .optional(),
  /**
   * The server's own secret: it signs the session cookie, and every other
   * key the server derives (the anonymous CSRF tokens', the bench's) comes
   * from it, an HMAC under a label of each key's own. Production refuses a
   * missing, short or shipped one.
   */
  SESSION_SECRET: z.string().min(16, 'SESSION_SECRET must be at least 16 characters').optional(),
  /** Set when the app runs behind a TLS-terminating proxy: cookies become Secure. */
  TRUST_PROXY: z
    .enum(['0', '1', 'true', 'false'])
    .default('0')
    .transform((v) => v === '1' || v === 'true'),
  SMTP_HOST: z.string().default('127.0.0.1'),
  SMTP_PORT: z.coerce.number().int().min(0).max(65535).default(0),
  MAIL_FROM: z.string().default('Loadline <no-reply@loadline.invalid>'),
  /**
   * Failed sign-ins allowed per account and network address in 15 minutes;
   * past it, that account is refused from that address until the window ends.
   * Successful sign-ins are never counted.
   */
  SIGN_IN_FAILURES_PER_ACCOUNT: count(10),
  /**
   * Failed sign-ins allowed per network address in 15 minutes, over all
   * accounts: the ceiling for someone guessing across a class's accounts. A
   * class behind one school address signing in correctly never counts toward it.
   */
  SIGN_IN_FAILURES_PER_ADDRESS: count(200),
  /** Password-reset requests per network address in 15 minutes. */
  RESET_REQUESTS_PER_ADDRESS: count(30),
  /** Password-reset requests per e-mail address in 15 minutes, known or not (no mailbox is flooded). */
  RESET_REQUESTS_PER_EMAIL: count(3),
  /** Links that did not work (unknown, used or expired) per network address in 15 minutes, on the page that sets a password. */
  SET_PASSWORD_FAILURES_PER_ADDRESS: count(30),
  /** Practice attempts a student may start in an hour. */
  PRACTICE_STARTS_PER_HOUR: count(30),
  /** Submissions a student may send in an hour (each attempt is graded by a re-run of the model). */
  SUBMISSIONS_PER_HOUR: count(60),
  /**
   * Worker threads that grade submissions (server/grading/pool.ts), so a
   * re-run does not hold up other requests; 0 grades in the request's own thread.
   */
  GRADING_WORKERS: z.coerce.number().int().min(0).max(8).default(1),
  /**
   * Memory each grading worker may hold for attempts it runs ahead while
   * students work (server/grading/run-ahead.ts), in MB: about 0.4 MB per
   * 10 minutes of sim time. 0 runs nothing ahead.
   */
  GRADING_AHEAD_MB: z.coerce.number().min(0).max(4096).default(128),
  /**
   * PostgreSQL connections this process keeps at most. Each busy bench holds
   * one for a few milliseconds a second; with several processes, keep the sum
   * under the server's max_connections.
   */
  DATABASE_POOL_SIZE: z.coerce.number().int().min(2).max(200).default(10),
  /**
   * How often an open class board checks the database for changes its
   * notifications may have missed (one light query), in seconds.
   */
  BOARD_RECHECK_SECONDS: z.coerce.number().min(0.2).max(3600).default(30),
  /**
   * Grades for learning platforms (server/lti/scores.ts): how often each
   * process looks for scores to send, and the first wait after a failed send
   * (doubled after each further failure, at most an hour), in milliseconds.
   */
  LTI_OUTBOX_POLL_MS: z.coerce.number().int().min(50).max(600_000).default(5_000),
  LTI_RETRY_BASE_MS: z.coerce.number().int().min(10).max(3_600_000).default(30_000),
});

/**
 * Production runs only with a public address and a secret of its own; in
 * development and tests both have local defaults.
 */
const checkedEnvSchema = envSchema
  .superRefine((env, ctx) => {
    if (env.NODE_ENV !== 'production') return;
    if (!env.PUBLIC_URL) {
      ctx.addIssue({ code: 'custom', path: ['PUBLIC_URL'], message: 'production needs PUBLIC_URL, the address people open the app at (e-mailed links are built from it)' });
    }
    if (!env.SESSION_SECRET) {
      ctx.addIssue({ code: 'custom', path: ['SESSION_SECRET'], message: 'production needs SESSION_SECRET, a random secret of its own (npm start makes one)' });
    } else if (env.SESSION_SECRET === DEVELOPMENT_SESSION_SECRET) {
      ctx.addIssue({ code: 'custom', path: ['SESSION_SECRET'], message: 'production refuses the development session secret shipped with Loadline: anyone could sign session cookies' });
    } else if (env.SESSION_SECRET.length < PRODUCTION_SECRET_MIN) {
      ctx.addIssue({ code: 'custom', path: ['SESSION_SECRET'], message: `production needs a SESSION_SECRET of at least ${PRODUCTION_SECRET_MIN} characters` });
    }
  })
  .transform((env) => ({
    ...env,
    SESSION_SECRET: env.SESSION_SECRET ?? DEVELOPMENT_SESSION_SECRET,
    PUBLIC_URL: env.PUBLIC_URL ?? `http://localhost:${env.PORT}`,
  }));

export type Env = z.infer<typeof checkedEnvSchema>;

export function readEnv(source: NodeJS.ProcessEnv = process.env): Env {
  const parsed = checkedEnvSchema.safeParse(source);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new Error(`Invalid environment:\n${lines.join('\n')}`);
  }
  return parsed.data;
}
