/**
 * Mail about an account: invitation and reset links, and the notice that a
 * student was added to a class. Links are built from the configured public
 * address (PUBLIC_URL) only, never from anything in a request: a forged Host
 * header would otherwise send a working token to the forger's site.
 */
import type { AppContext } from '../context.ts';
import { issueToken, type TokenPurpose } from './tokens.ts';

export function appUrl(ctx: Pick<AppContext, 'env'>): string {
  return ctx.env.PUBLIC_URL;
}

const copy: Record<TokenPurpose, { subject: string; intro: string }> = {
  invite: {
    subject: 'You are invited to Loadline',
    intro: 'An account has been made for you on Loadline, the charging-system bench. Choose a password to sign in:',
  },
  reset: {
    subject: 'Reset your Loadline password',
    intro: 'Someone (we hope you) asked to reset your Loadline password. Choose a new one here:',
  },
};

/** Issues a token and e-mails its link. The link works once, expires, and ends any earlier link of the user. */
export async function sendPasswordLink(ctx: AppContext, user: { id: number; email: string; name: string }, purpose: TokenPurpose): Promise<void> {
  const token = await issueToken(ctx.db, user.id, purpose);
  const link = `${appUrl(ctx)}/set-password?token=${encodeURIComponent(token)}`;
  const hours = purpose === 'invite' ? '7 days' : '1 hour';
  await ctx.mailer.send({
    to: user.email,
    subject: copy[purpose].subject,
    text: `Hello ${user.name},\n\n${copy[purpose].intro}\n\n${link}\n\nThe link works once and expires in ${hours}. If you did not expect this message, ignore it.\n\n— Loadline`,
  });
}

/**
 * Tells a student with an account that an instructor added them to a class,
 * so nobody is enrolled without knowing (their work for that class is then
 * the class instructors' to see).
 */
export async function sendEnrolmentNotice(
  ctx: AppContext,
  student: { email: string; name: string },
  cls: { name: string; term: string },
  by: { name: string },
): Promise<void> {
  const className = cls.term ? `${cls.name} (${cls.term})` : cls.name;
  await ctx.mailer.send({
    to: student.email,
    subject: `You were added to ${className} on Loadline`,
    text: `Hello ${student.name},\n\n${by.name} added you to the class ${className} on Loadline. Its instructors will see the work you do for its assignments; your practice runs stay your own.\n\nSign in at ${appUrl(ctx)} to see its assignments. If you did not expect this, tell your program admin.\n\n— Loadline`,
  });
}
