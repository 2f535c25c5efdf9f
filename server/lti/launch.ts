/**
 * What a verified launch does, in one transaction: the person's account
 * (accounts.ts), the class the course is (made on its first launch), the
 * person's place in it, the assignment the resource link opens (with its
 * line item for grades), and where the person lands: a learner at the
 * assignment's bench, an instructor at its comparison, and a deep-linking
 * request at the scenario picker. Ends with a one-time token for the session
 * handoff (handoff.ts).
 */
import { and, desc, eq, lt, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '../db/client.ts';
import { assignments, attempts, classes, classInstructors, enrollments } from '../db/schema.ts';
import { accountOf, markLaunched } from './accounts.ts';
import { ASSIGNMENT_CUSTOM, CLAIM, mappedRole, MESSAGE } from './claims.ts';
import { createHandoff } from './handoff.ts';
import { randomToken } from './login.ts';
import { refuse } from './refusal.ts';
import { ltiContexts, ltiDeepLinkRequests, ltiMemberships, ltiPlacements, ltiResourceLinks } from './tables.ts';
import type { VerifiedLaunch } from './verify.ts';

export const DEEP_LINK_TTL_MS = 60 * 60 * 1000;

export interface LaunchOutcome {
  userId: number;
  role: 'instructor' | 'student';
  classId: number;
  assignmentId: number | null;
  target: string;
  handoff: string;
}

/** The class a platform's course is: found by platform and context id, made on the first launch from it. */
export async function classOfContext(
  db: DbOrTx,
  platformId: number,
  deploymentId: string,
  context: { id: string; title?: string | undefined; label?: string | undefined },
  membershipsUrl: string | null,
  now = new Date(),
): Promise<number> {
  const title = (context.title || context.label || '').replace(/\s+/g, ' ').trim();
  const [known] = await db
    .select({ classId: ltiContexts.classId, title: ltiContexts.title, membershipsUrl: ltiContexts.membershipsUrl, deploymentId: ltiContexts.deploymentId })
    .from(ltiContexts)
    .where(and(eq(ltiContexts.platformId, platformId), eq(ltiContexts.contextId, context.id)));
  if (known) {
    if (known.membershipsUrl !== membershipsUrl || (title && known.title !== title.slice(0, 255)) || known.deploymentId !== deploymentId) {
      await db
        .update(ltiContexts)
        .set({ membershipsUrl, title: title ? title.slice(0, 255) : known.title, deploymentId, updatedAt: now })
        .where(and(eq(ltiContexts.platformId, platformId), eq(ltiContexts.contextId, context.id)));
    }
    return known.classId;
  }
  const [made] = await db
    .insert(classes)
    .values({ name: (title || `Course ${context.id}`).slice(0, 120), term: '' })
    .returning({ id: classes.id });
  await db.insert(ltiContexts).values({ platformId, contextId: context.id, classId: made!.id, deploymentId, title: title.slice(0, 255), membershipsUrl });
  return made!.id;
}

/** Puts the person in the class as the platform says: a learner enrolled, an instructor teaching (an admin teaches every class already). */
export async function placeInClass(db: DbOrTx, classId: number, userId: number, accountRole: string, role: 'instructor' | 'student', now = new Date()): Promise<void> {
  if (role === 'student') await db.insert(enrollments).values({ classId, userId }).onConflictDoNothing();
  else if (accountRole === 'instructor') await db.insert(classInstructors).values({ classId, userId }).onConflictDoNothing();
  await db
    .insert(ltiMemberships)
    .values({ classId, userId, role, status: 'active', syncedAt: now })
    .onConflictDoUpdate({ target: [ltiMemberships.classId, ltiMemberships.userId], set: { role, status: 'active', goneAt: null, syncedAt: now } });
}

/**
 * The assignment a resource link opens. Known links are kept; a new link
 * carrying the assignment id that deep linking gave it is accepted only from
 * the platform that placed that assignment. A course copied on the platform
 * brings links whose assignment belongs to the old course's class: the
 * assignment is copied into this class, so the two courses keep their own.
 */
async function assignmentOfLink(db: DbOrTx, v: VerifiedLaunch, classId: number, now: Date): Promise<number | null> {
  const link = v.claims[CLAIM.resourceLink]!;
  const ags = v.claims[CLAIM.ags];
  const agsFields = { lineitemUrl: ags?.lineitem ?? null, lineitemsUrl: ags?.lineitems ?? null, agsScopes: ags?.scope ?? [], updatedAt: now };
  const [known] = await db
    .select({ assignmentId: ltiResourceLinks.assignmentId, classId: assignments.classId })
    .from(ltiResourceLinks)
    .innerJoin(assignments, eq(assignments.id, ltiResourceLinks.assignmentId))
    .where(and(eq(ltiResourceLinks.platformId, v.platform.id), eq(ltiResourceLinks.resourceLinkId, link.id)));
  if (known && known.classId === classId) {
    await db
      .update(ltiResourceLinks)
      .set(agsFields)
      .where(and(eq(ltiResourceLinks.platformId, v.platform.id), eq(ltiResourceLinks.resourceLinkId, link.id)));
    return known.assignmentId;
  }

  const custom = v.claims[CLAIM.custom]?.[ASSIGNMENT_CUSTOM];
  const named = known?.assignmentId ?? (typeof custom === 'string' || typeof custom === 'number' ? Number(custom) : NaN);
  if (!Number.isInteger(named) || named <= 0) return null;
  const [placed] = await db
    .select({ assignmentId: assignments.id, classId: assignments.classId, contextId: ltiPlacements.contextId })
    .from(ltiPlacements)
    .innerJoin(assignments, eq(assignments.id, ltiPlacements.assignmentId))
    .where(and(eq(ltiPlacements.assignmentId, named), eq(ltiPlacements.platformId, v.platform.id)));
  if (!placed) return null;
  let assignmentId = placed.assignmentId;
  if (placed.classId !== classId) {
    const contextId = v.claims[CLAIM.context]!.id;
    const [copy] = await db
      .insert(assignments)
      .select(
        db
          .select({
            classId: sql<number>`${classId}`.as('class_id'),
            scenarioVersionId: assignments.scenarioVersionId,
            title: assignments.title,
            opensAt: assignments.opensAt,
            dueAt: assignments.dueAt,
            attemptsAllowed: assignments.attemptsAllowed,
            showCurveAfter: assignments.showCurveAfter,
            showFeedbackAfter: assignments.showFeedbackAfter,
            createdBy: assignments.createdBy,
          })
          .from(assignments)
          .where(eq(assignments.id, placed.assignmentId)),
      )
      .returning({ id: assignments.id });
    assignmentId = copy!.id;
    await db.insert(ltiPlacements).values({ assignmentId, platformId: v.platform.id, contextId });
  }
  await db
    .insert(ltiResourceLinks)
    .values({ platformId: v.platform.id, resourceLinkId: link.id, assignmentId, ...agsFields })
    .onConflictDoUpdate({ target: [ltiResourceLinks.platformId, ltiResourceLinks.resourceLinkId], set: { assignmentId, ...agsFields } });
  return assignmentId;
}

/** Where a learner lands: the running attempt, a new one while attempts are left, else where they stand. */
async function learnerTarget(db: DbOrTx, userId: number, assignmentId: number, now: Date): Promise<string> {
  const [running] = await db
    .select({ id: attempts.id })
    .from(attempts)
    .where(and(eq(attempts.assignmentId, assignmentId), eq(attempts.userId, userId), eq(attempts.status, 'running')))
    .orderBy(desc(attempts.id))
    .limit(1);
  if (running) return `/bench/${running.id}`;
  const [a] = await db.select({ opensAt: assignments.opensAt, dueAt: assignments.dueAt, attemptsAllowed: assignments.attemptsAllowed }).from(assignments).where(eq(assignments.id, assignmentId));
  if (!a || a.opensAt > now) return '/bench';
  const [used] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(attempts)
    .where(and(eq(attempts.assignmentId, assignmentId), eq(attempts.userId, userId)));
  if (a.dueAt > now && (used?.n ?? 0) < a.attemptsAllowed) return `/bench/new?assignmentId=${assignmentId}`;
  return `/assignments/${assignmentId}/compare`;
}

export async function provisionLaunch(db: Db, v: VerifiedLaunch, now = new Date()): Promise<LaunchOutcome> {
  const c = v.claims;
  const roles = c[CLAIM.roles];
  const role = mappedRole(roles);
  const detail = { platformId: v.platform.id };
  if (!role) {
    throw refuse(
      403,
      'Loadline has no place for this course role',
      `Loadline lets in the course's instructors, teaching assistants and learners; this launch says: ${roles.length ? roles.map((r) => r.split('#').pop()).join(', ') : 'no role at all'}.`,
      'unmapped-roles',
      { ...detail, roles },
    );
  }
  if (v.messageType === MESSAGE.deepLinkingRequest && role !== 'instructor') {
    throw refuse(403, 'Only instructors add Loadline activities', 'Adding an activity from Loadline is for the course’s instructors.', 'deep-linking-by-learner', detail);
  }
  return db.transaction(async (tx) => {
    const person = { subject: c.sub, name: c.name, givenName: c.given_name, familyName: c.family_name, email: c.email };
    const account = await accountOf(tx, v.platform.id, person, role, now);
    if (account.kind === 'disabled') {
      throw refuse(403, 'This account is disabled', 'Your Loadline account has been disabled; ask your program admin.', 'account-disabled', { ...detail, userId: account.userId });
    }
    if (account.kind === 'role-mismatch') {
      throw refuse(
        403,
        'Your Loadline account has another role',
        `Your Loadline account is a${account.accountRole === 'admin' ? 'n admin' : account.accountRole === 'instructor' ? 'n instructor' : ' student'} account, but this course launches you as ${role === 'instructor' ? 'an instructor' : 'a learner'}.`,
        'role-mismatch',
        { ...detail, userId: account.userId, accountRole: account.accountRole, launchedAs: role },
        'Ask your program admin to sort out which role your account should have.',
      );
    }
    await markLaunched(tx, v.platform.id, c.sub, now);
    const classId = await classOfContext(tx, v.platform.id, v.deploymentId, c[CLAIM.context]!, c[CLAIM.nrps]?.context_memberships_url ?? null, now);
    await placeInClass(tx, classId, account.userId, account.role, role, now);

    let target: string;
    let assignmentId: number | null = null;
    if (v.messageType === MESSAGE.deepLinkingRequest) {
      const settings = c[CLAIM.deepLinkingSettings]!;
      const id = randomToken(24);
      await tx.delete(ltiDeepLinkRequests).where(lt(ltiDeepLinkRequests.expiresAt, new Date(now.getTime() - DEEP_LINK_TTL_MS)));
      await tx.insert(ltiDeepLinkRequests).values({
        id,
        userId: account.userId,
        platformId: v.platform.id,
        deploymentId: v.deploymentId,
        contextId: c[CLAIM.context]!.id,
        classId,
        returnUrl: settings.deep_link_return_url,
        data: settings.data ?? null,
        acceptsLineItem: settings.accept_lineitem !== false,
        expiresAt: new Date(now.getTime() + DEEP_LINK_TTL_MS),
      });
      target = `/deep-link/${id}`;
    } else {
      assignmentId = await assignmentOfLink(tx, v, classId, now);
      if (assignmentId === null) target = role === 'student' ? '/bench' : `/classes/${classId}`;
      else target = role === 'student' ? await learnerTarget(tx, account.userId, assignmentId, now) : `/assignments/${assignmentId}/compare`;
    }
    const handoff = await createHandoff(tx, account.userId, target, now);
    return { userId: account.userId, role, classId, assignmentId, target, handoff };
  });
}
