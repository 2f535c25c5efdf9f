/** The server's environment, validated once at boot. */
import { z } from 'zod';

const envSchema = z.object({
  NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
  DATABASE_URL: z.string().min(1, 'DATABASE_URL is required'),
  PORT: z.coerce.number().int().min(0).max(65535).default(5180),
  HOST: z.string().default('127.0.0.1'),
  /** Public address of the app, used in e-mailed links. */
  APP_URL: z.string().url().optional(),
  SESSION_SECRET: z.string().min(16).default('loadline-development-secret-change-me'),
  /** Set when the app runs behind a TLS-terminating proxy: cookies become Secure. */
  TRUST_PROXY: z
    .enum(['0', '1', 'true', 'false'])
    .default('0')
    .transform((v) => v === '1' || v === 'true'),
  SMTP_HOST: z.string().default('127.0.0.1'),
  SMTP_PORT: z.coerce.number().int().min(0).max(65535).default(0),
  MAIL_FROM: z.string().default('Loadline <no-reply@loadline.invalid>'),
  SIGN_IN_LIMIT: z.coerce.number().int().min(1).default(10),
  /**
   * Worker threads that grade submissions (server/services/grading-pool.ts), so a
   * re-run does not hold up other requests; 0 grades in the request's own thread.
   */
  GRADING_WORKERS: z.coerce.number().int().min(0).max(8).default(1),
  /**
   * Memory each grading worker may hold for attempts it runs ahead while
   * students work (server/services/run-ahead.ts), in MB: about 0.4 MB per
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

export type Env = z.infer<typeof envSchema>;

export function readEnv(source: NodeJS.ProcessEnv = process.env): Env {
  const parsed = envSchema.safeParse(source);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new Error(`Invalid environment:\n${lines.join('\n')}`);
  }
  return parsed.data;
}
