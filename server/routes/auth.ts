import { eq, sql } from 'drizzle-orm';
import { rateLimit } from 'express-rate-limit';
import { signInSchema, type SessionUser } from '../../shared/api/auth.ts';
import { resetRequestSchema, setPasswordSchema } from '../../shared/api/password.ts';
import { csrfTokenFor, newCsrfToken } from '../auth/csrf.ts';
import { hashPassword, verifyPassword } from '../auth/passwords.ts';
import { SESSION_COOKIE } from '../auth/session.ts';
import type { AppContext } from '../context.ts';
import { users } from '../db/schema.ts';
import { HttpError } from '../http/errors.ts';
import { PgRateLimitStore } from '../http/rate-limit-store.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody } from '../http/validate.ts';
import { sendPasswordLink } from '../services/invitations.ts';
import { consumeToken } from '../services/tokens.ts';

export function authRoutes(ctx: AppContext) {
  const g = routeGroup('/api/auth');
  const limiter = (name: string, limit: number, message: string) =>
    rateLimit({
      store: new PgRateLimitStore(ctx.pool, `${name}:`),
      windowMs: 15 * 60 * 1000,
      limit,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      handler: (_req, res) => {
        res.status(429).json({ error: { message } });
      },
    });
  const signInLimit = limiter('sign-in', ctx.env.SIGN_IN_LIMIT, 'Too many sign-in attempts; wait a few minutes and try again');
  const resetLimit = limiter('reset', Math.max(3, Math.floor(ctx.env.SIGN_IN_LIMIT / 2)), 'Too many reset requests; wait a few minutes and try again');

  g.get('/me', 'public', (req, res) => {
    res.json({ user: req.user ?? null, csrfToken: csrfTokenFor(req) });
  });

  g.post('/sign-in', 'public', signInLimit, async (req, res) => {
    const input = parseBody(signInSchema, req);
    const [row] = await ctx.db
      .select({ id: users.id, email: users.email, name: users.name, role: users.role, passwordHash: users.passwordHash, disabled: users.disabled })
      .from(users)
      .where(sql`lower(${users.email}) = ${input.email}`);
    const ok = await verifyPassword(input.password, row?.passwordHash ?? null);
    if (!row || !ok) throw new HttpError(401, 'E-mail or password is not right', { field: 'password' });
    if (row.disabled) throw new HttpError(403, 'This account is disabled; ask your program admin', { field: 'email' });

    // A fresh session id at sign-in defeats session fixation.
    await new Promise<void>((resolve, reject) => req.session.regenerate((err) => (err ? reject(err) : resolve())));
    req.session.userId = row.id;
    req.session.role = row.role;
    req.session.csrfToken = newCsrfToken();
    await new Promise<void>((resolve, reject) => req.session.save((err) => (err ? reject(err) : resolve())));
    const user: SessionUser = { id: row.id, email: row.email, name: row.name, role: row.role };
    res.json({ user, csrfToken: req.session.csrfToken });
  });

  g.post('/sign-out', 'public', async (req, res) => {
    await new Promise<void>((resolve) => req.session.destroy(() => resolve()));
    res.clearCookie(SESSION_COOKIE, { httpOnly: true, sameSite: 'lax', secure: ctx.env.TRUST_PROXY });
    res.status(204).end();
  });

  g.post('/password-reset', 'public', resetLimit, async (req, res) => {
    const { email } = parseBody(resetRequestSchema, req);
    const [row] = await ctx.db
      .select({ id: users.id, email: users.email, name: users.name, disabled: users.disabled })
      .from(users)
      .where(sql`lower(${users.email}) = ${email}`);
    if (row && !row.disabled) await sendPasswordLink(ctx, req, row, 'reset');
    // The same answer whether or not the address is known.
    res.status(202).json({ message: 'If that address has an account, a reset link is on its way.' });
  });

  g.post('/set-password', 'public', resetLimit, async (req, res) => {
    const input = parseBody(setPasswordSchema, req);
    const hash = await hashPassword(input.password);
    const done = await ctx.db.transaction(async (tx) => {
      const token = await consumeToken(tx, input.token);
      if (!token) return false;
      await tx.update(users).set({ passwordHash: hash, updatedAt: new Date() }).where(eq(users.id, token.userId));
      return true;
    });
    if (!done) throw new HttpError(400, 'This link has expired or was already used; ask for a new one', { field: 'token' });
    res.status(204).end();
  });

  return g;
}
