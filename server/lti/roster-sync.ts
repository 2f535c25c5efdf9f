/**
 * The class page's roster sync (Names and Role Provisioning Services 2.0):
 * the course's members as the platform lists them, added to the class (an
 * account made for a new person, matched by platform and subject only),
 * updated (names, a place in the class) and marked gone (no longer listed,
 * or listed as inactive or deleted: their place in the class is taken away,
 * their attempts stay). All or nothing, like the CSV import: one member the
 * sync cannot take changes nothing, and the answer names them.
 *
 * 1EdTech Names and Role Provisioning Services 2.0 §2.2 (membership
 * container, application/vnd.ims.lti-nrps.v2.membershipcontainer+json) and
 * §2.4 (paging with the Link header's rel="next", section from memory).
 */
import { and, desc, eq, inArray } from 'drizzle-orm';
import { z } from 'zod';
import type { SessionUser } from '../../shared/api/auth.ts';
import type { ClassLink, RosterSyncResult } from '../../shared/api/lti.ts';
import type { AppContext } from '../context.ts';
import type { DbOrTx } from '../db/client.ts';
import { classInstructors, enrollments, users } from '../db/schema.ts';
import { conflict, HttpError } from '../http/errors.ts';
import { accountOf } from './accounts.ts';
import { MEDIA, mappedRole, SCOPE } from './claims.ts';
import { placeInClass } from './launch.ts';
import { platformById } from './platforms.ts';
import { callService, ServiceError, serviceToken } from './service-token.ts';
import { ltiContexts, ltiMemberships, ltiPlatforms, ltiRosterSyncs } from './tables.ts';

export const MAX_PAGES = 50;
export const MAX_MEMBERS = 5_000;

const memberSchema = z.object({
  user_id: z.string({ error: 'user_id is missing' }).min(1, 'user_id is empty').max(255, 'user_id is longer than 255 characters'),
  roles: z.array(z.string().max(500), { error: 'roles is missing' }),
  status: z.enum(['Active', 'Inactive', 'Deleted'], { error: 'status must be Active, Inactive or Deleted' }).default('Active'),
  name: z.string().max(500).optional(),
  given_name: z.string().max(250).optional(),
  family_name: z.string().max(250).optional(),
  email: z.string().max(254).optional(),
});
type Member = z.infer<typeof memberSchema>;

const containerSchema = z.object({ members: z.array(z.unknown(), { error: 'the answer has no members list' }) });

/** The rel="next" address of a Link header, if any. */
export function nextLink(header: string | null): string | null {
  if (!header) return null;
  for (const part of header.split(',')) {
    const m = /<([^>]+)>\s*;\s*rel="?next"?/i.exec(part.trim());
    if (m?.[1]) return m[1];
  }
  return null;
}

export async function classLinkOf(db: DbOrTx, classId: number): Promise<ClassLink> {
  const [link] = await db
    .select({ platformName: ltiPlatforms.name, title: ltiContexts.title, membershipsUrl: ltiContexts.membershipsUrl })
    .from(ltiContexts)
    .innerJoin(ltiPlatforms, eq(ltiPlatforms.id, ltiContexts.platformId))
    .where(eq(ltiContexts.classId, classId));
  if (!link) return { linked: false, platformName: null, contextTitle: null, canSync: false, lastSync: null, gone: [] };
  const [last] = await db.select().from(ltiRosterSyncs).where(eq(ltiRosterSyncs.classId, classId)).orderBy(desc(ltiRosterSyncs.id)).limit(1);
  const gone = await db
    .select({ userId: ltiMemberships.userId, name: users.name, role: ltiMemberships.role, goneAt: ltiMemberships.goneAt })
    .from(ltiMemberships)
    .innerJoin(users, eq(users.id, ltiMemberships.userId))
    .where(and(eq(ltiMemberships.classId, classId), eq(ltiMemberships.status, 'gone')))
    .orderBy(users.name);
  return {
    linked: true,
    platformName: link.platformName,
    contextTitle: link.title || null,
    canSync: link.membershipsUrl !== null,
    lastSync: last ? { at: last.createdAt.toISOString(), added: last.added, updated: last.updated, gone: last.gone } : null,
    gone: gone.map((g) => ({ userId: g.userId, name: g.name, role: g.role, goneAt: (g.goneAt ?? new Date(0)).toISOString() })),
  };
}

/** Every member the platform lists, page after page; a member that does not parse is named, and nothing is changed. */
async function fetchMembers(ctx: AppContext, platformId: number, url: string): Promise<Member[]> {
  const platform = await platformById(ctx.db, platformId);
  if (!platform) throw conflict('The platform of this class is no longer registered');
  const token = await serviceToken(ctx.db, platform, [SCOPE.memberships]);
  const raw: unknown[] = [];
  let next: string | null = url;
  for (let page = 0; next; page++) {
    if (page >= MAX_PAGES) throw new HttpError(502, `The platform's roster runs past ${MAX_PAGES} pages; nothing was changed`);
    const res = await callService(next, { headers: { Authorization: `Bearer ${token}`, Accept: MEDIA.memberships } }, 'Roster');
    const body = containerSchema.safeParse(await res.json().catch(() => null));
    if (!body.success) throw new HttpError(502, `The platform's roster is not a membership container (${body.error.issues[0]?.message ?? 'bad answer'}); nothing was changed`);
    raw.push(...body.data.members);
    if (raw.length > MAX_MEMBERS) throw new HttpError(502, `The platform lists more than ${MAX_MEMBERS} members; nothing was changed`);
    next = nextLink(res.headers.get('link'));
  }
  const members: Member[] = [];
  const problems: { path: string; message: string }[] = [];
  const seen = new Map<string, number>();
  raw.forEach((m, i) => {
    const parsed = memberSchema.safeParse(m);
    const id = (m as { user_id?: unknown } | null)?.user_id;
    const label = `member ${i + 1}${typeof id === 'string' && id ? ` (${id})` : ''}`;
    if (!parsed.success) {
      problems.push({ path: label, message: parsed.error.issues.map((x) => x.message).join('; ') });
      return;
    }
    const first = seen.get(parsed.data.user_id);
    if (first !== undefined) problems.push({ path: label, message: `the same user_id as member ${first}` });
    else seen.set(parsed.data.user_id, i + 1);
    members.push(parsed.data);
  });
  if (problems.length) {
    const p = problems[0]!;
    throw new HttpError(422, `${p.path}: ${p.message}${problems.length > 1 ? ` (and ${problems.length - 1} more)` : ''}; nothing was changed`, { field: p.path, issues: problems });
  }
  return members;
}

export async function syncRoster(ctx: AppContext, user: SessionUser, classId: number, now = new Date()): Promise<RosterSyncResult> {
  const [context] = await ctx.db
    .select({ platformId: ltiContexts.platformId, membershipsUrl: ltiContexts.membershipsUrl })
    .from(ltiContexts)
    .where(eq(ltiContexts.classId, classId));
  if (!context) throw conflict('This class is not linked to a course on a learning platform');
  if (!context.membershipsUrl) throw conflict('The platform does not offer this course’s roster to Loadline (no membership service in its launches)');
  let members: Member[];
  try {
    members = await fetchMembers(ctx, context.platformId, context.membershipsUrl);
  } catch (err) {
    if (err instanceof ServiceError) throw new HttpError(502, `${err.message}; nothing was changed`);
    throw err;
  }

  return ctx.db.transaction(async (tx) => {
    const result: RosterSyncResult = { added: [], updated: [], gone: [], unchanged: 0 };
    const problems: { path: string; message: string }[] = [];
    const before = new Map(
      (await tx.select({ userId: ltiMemberships.userId, status: ltiMemberships.status, role: ltiMemberships.role }).from(ltiMemberships).where(eq(ltiMemberships.classId, classId))).map((r) => [
        r.userId,
        r,
      ]),
    );
    const listed = new Set<number>();
    for (const [i, m] of members.entries()) {
      const role = mappedRole(m.roles);
      // A mentor or observer has no place in Loadline: left out, as a launch would refuse them.
      if (!role || m.status !== 'Active') continue;
      const person = { subject: m.user_id, name: m.name, givenName: m.given_name, familyName: m.family_name, email: m.email };
      const account = await accountOf(tx, context.platformId, person, role, now);
      const label = `member ${i + 1} (${m.user_id})`;
      if (account.kind === 'disabled') {
        problems.push({ path: label, message: 'their Loadline account is disabled' });
        continue;
      }
      if (account.kind === 'role-mismatch') {
        problems.push({ path: label, message: `the platform lists them as ${role === 'instructor' ? 'an instructor' : 'a learner'}, but their Loadline account is ${account.accountRole === 'instructor' ? 'an instructor' : `a${account.accountRole === 'admin' ? 'n' : ''} ${account.accountRole}`} account` });
        continue;
      }
      listed.add(account.userId);
      const was = before.get(account.userId);
      await placeInClass(tx, classId, account.userId, account.role, role, now);
      const entry = { name: account.name, role };
      if (account.created || !was) result.added.push(entry);
      else if (account.renamed || was.status !== 'active' || was.role !== role) result.updated.push(entry);
      else result.unchanged++;
    }
    if (problems.length) {
      const p = problems[0]!;
      throw new HttpError(409, `${p.path}: ${p.message}${problems.length > 1 ? ` (and ${problems.length - 1} more)` : ''}; nothing was changed`, { field: p.path, issues: problems });
    }
    const leaving = [...before.values()].filter((b) => b.status === 'active' && !listed.has(b.userId) && b.userId !== user.id);
    if (leaving.length) {
      const ids = leaving.map((l) => l.userId);
      await tx.delete(enrollments).where(and(eq(enrollments.classId, classId), inArray(enrollments.userId, ids)));
      await tx.delete(classInstructors).where(and(eq(classInstructors.classId, classId), inArray(classInstructors.userId, ids)));
      await tx
        .update(ltiMemberships)
        .set({ status: 'gone', goneAt: now, syncedAt: now })
        .where(and(eq(ltiMemberships.classId, classId), inArray(ltiMemberships.userId, ids)));
      const names = await tx.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, ids));
      for (const l of leaving) result.gone.push({ name: names.find((n) => n.id === l.userId)?.name ?? `#${l.userId}`, role: l.role });
    }
    await tx.insert(ltiRosterSyncs).values({ classId, syncedBy: user.id, added: result.added.length, updated: result.updated.length, gone: result.gone.length });
    ctx.log('info', 'lti roster synced', { classId, added: result.added.length, updated: result.updated.length, gone: result.gone.length });
    return result;
  });
}
