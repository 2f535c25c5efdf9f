/**
 * Sign-in, sign-out, password resets and setting a password from an e-mailed
 * link (/api/auth).
 *
 * Limits, all counted in PostgreSQL (server/http/rate-limit-store.ts) so every
 * process shares them, and all per network address as well, since a class
 * shares one school address:
 * - sign-in counts failures only, per account and address
 *   (SIGN_IN_FAILURES_PER_ACCOUNT: that account is refused from that address
 *   until its window ends) and per address over all accounts
 *   (SIGN_IN_FAILURES_PER_ADDRESS, far above what a class mistypes); a
 *   successful sign-in is never counted and clears its account's failures;
 * - a reset request is counted per address and per e-mail, known or not;
 * - setting a password counts links that did not work, per address, with its
 *   own message: a class accepting its invitations together is never refused.
 */
import { createHash } from 'node:crypto';
import type { Request, Response } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { signInSchema, type SessionUser } from '../../shared/api/auth.ts';
import { resetRequestSchema, setPasswordSchema } from '../../shared/api/password.ts';
import { csrf, newCsrfToken } from '../http/csrf.ts';
import { hashPassword, verifyPassword } from './passwords.ts';
import { forgetSessionsOf, SESSION_COOKIE } from './session.ts';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/errors.ts';
import { minutesUntil, PgCounter, PgRateLimitStore } from '../http/rate-limit-store.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody } from '../http/validate.ts';
import { sendPasswordLink } from './invitations.ts';
import { accountForReset, accountForSignIn, emailOf, setPasswordByToken } from './users.ts';

const WINDOW_MS = 15 * 60 * 1000;

/** The client's network address as the limits count it (an IPv6 client by its /56, as express-rate-limit does). */
const addressOf = (req: Request): string => ipKeyGenerator(req.ip ?? 'unknown');
/** An e-mail in a counter's key, hashed: the table never holds the addresses people typed. */
const emailKey = (email: string): string => createHash('sha256').update(email).digest('base64url').slice(0, 22);

function tooMany(res: Response, resetAt: Date, message: (minutes: string) => string, field?: string): HttpError {
  const minutes = minutesUntil(resetAt);
  res.setHeader('Retry-After', String(minutes * 60));
  return new HttpError(429, message(minutes === 1 ? 'a minute' : `${minutes} minutes`), field ? { field } : {});
}

export function authRoutes(ctx: AppContext) {
  const g = routeGroup('/api/auth');
  const tokens = csrf({ secret: ctx.env.SESSION_SECRET, secure: ctx.env.TRUST_PROXY });
  const accountFailures = new PgCounter(ctx.pool, 'sign-in-account:', ctx.env.SIGN_IN_FAILURES_PER_ACCOUNT, WINDOW_MS);
  const addressFailures = new PgCounter(ctx.pool, 'sign-in-address:', ctx.env.SIGN_IN_FAILURES_PER_ADDRESS, WINDOW_MS);
  const resetsPerEmail = new PgCounter(ctx.pool, 'reset-email:', ctx.env.RESET_REQUESTS_PER_EMAIL, WINDOW_MS);
  const badLinks = new PgCounter(ctx.pool, 'set-password:', ctx.env.SET_PASSWORD_FAILURES_PER_ADDRESS, WINDOW_MS);
  const resetsPerAddress = rateLimit({
    store: new PgRateLimitStore(ctx.pool, 'reset:'),
    windowMs: WINDOW_MS,
    limit: ctx.env.RESET_REQUESTS_PER_ADDRESS,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, res) => {
      res.status(429).json({ error: { message: 'Too many reset requests; wait a few minutes and try again' } });
    },
  });

  g.get('/me', 'public', (req, res) => {
    res.json({ user: req.user ?? null, csrfToken: tokens.tokenFor(req, res) });
  });

  g.post('/sign-in', 'public', async (req, res) => {
    const input = parseBody(signInSchema, req);
    const address = addressOf(req);
    const accountKey = `${emailKey(input.email)}:${address}`;
    // Counted before the password is checked, so parallel guesses cannot overshoot the limit; a success takes it back.
    const accountOver = await accountFailures.hit(accountKey);
    if (accountOver) {
      throw tooMany(res, accountOver, (wait) => `Too many failed sign-ins to this account from your network; try again in ${wait}, or reset the password`, 'email');
    }
    const addressOver = await addressFailures.blocked(address);
    if (addressOver) {
      throw tooMany(res, addressOver, (wait) => `Too many failed sign-ins from your network; try again in ${wait}`);
    }
    const row = await accountForSignIn(ctx.db, input.email);
    const ok = await verifyPassword(input.password, row?.passwordHash ?? null);
    if (!row || !ok) {
      await addressFailures.hit(address);
      throw new HttpError(401, 'E-mail or password is not right', { field: 'password' });
    }
    await accountFailures.clear(accountKey);
    if (row.disabled) throw new HttpError(403, 'This account is disabled; ask your program admin', { field: 'email' });

    // A fresh session id at sign-in defeats session fixation.
    await new Promise<void>((resolve, reject) => req.session.regenerate((err) => (err ? reject(err) : resolve())));
    req.session.userId = row.id;
    req.session.role = row.role;
    req.session.csrfToken = newCsrfToken();
    await new Promise<void>((resolve, reject) => req.session.save((err) => (err ? reject(err) : resolve())));
    tokens.forgetAnonymous(res);
    const user: SessionUser = { id: row.id, email: row.email, name: row.name, role: row.role };
    res.json({ user, csrfToken: req.session.csrfToken });
  });

  g.post('/sign-out', 'public', async (req, res) => {
    await new Promise<void>((resolve) => req.session.destroy(() => resolve()));
    res.clearCookie(SESSION_COOKIE, { httpOnly: true, sameSite: 'lax', secure: ctx.env.TRUST_PROXY });
    res.status(204).end();
  });

  // The answer is the same, and takes the same time, whether or not the address has an account: looking it up,
  // issuing the token and sending the mail all happen after the answer has gone.
  g.post('/password-reset', 'public', resetsPerAddress, async (req, res) => {
    const { email } = parseBody(resetRequestSchema, req);
    const over = await resetsPerEmail.hit(emailKey(email));
    if (over) throw tooMany(res, over, () => 'Too many reset requests; wait a few minutes and try again');
    ctx.background.run('password reset mail', async () => {
      const row = await accountForReset(ctx.db, email);
      if (row && !row.disabled) await sendPasswordLink(ctx, row, 'reset');
    });
    res.status(202).json({ message: 'If that address has an account, a reset link is on its way.' });
  });

  // Accepting an invitation or a reset: the token's account gets the password, every other link of theirs stops
  // working and every other session of theirs ends.
  g.post('/set-password', 'public', async (req, res) => {
    const input = parseBody(setPasswordSchema, req);
    const address = addressOf(req);
    const over = await badLinks.blocked(address);
    if (over) {
      throw tooMany(res, over, (wait) => `Too many links that do not work were tried from your network; wait ${wait}, then open the newest link you were sent`, 'token');
    }
    const hash = await hashPassword(input.password);
    const userId = await setPasswordByToken(ctx.db, input.token, hash, (id) => (req.session.userId === id ? req.sessionID : null));
    if (userId === null) {
      await badLinks.hit(address);
      throw new HttpError(400, 'This link has expired or was already used; ask for a new one', { field: 'token' });
    }
    forgetSessionsOf(ctx.pool, userId);
    // The new password opens the account again wherever failed guesses had shut it.
    const email = await emailOf(ctx.db, userId);
    if (email !== null) await accountFailures.clearStartingWith(`${emailKey(email.toLowerCase())}:`);
    res.status(204).end();
  });

  return g;
}
