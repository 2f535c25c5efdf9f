/**
 * Deep Linking 2.0: from the platform's "add activity", an instructor picks a
 * scenario in Loadline and sets its dates and attempts; Loadline makes the
 * assignment in the course's class and answers with a signed
 * LtiDeepLinkingResponse holding one LTI resource link, with a line item for
 * its grades, which the browser posts back to the platform.
 * 1EdTech Deep Linking 2.0 §4.5 (deep linking response message) and §3.2
 * (the LTI resource link content item and its lineItem).
 */
import { and, eq } from 'drizzle-orm';
import type { SessionUser } from '../../shared/api/auth.ts';
import type { DeepLinkChoice, DeepLinkResponse, DeepLinkView } from '../../shared/api/lti.ts';
import { studentScenarioView, type ScenarioDefinition } from '../../shared/scenario.ts';
import { assertCanManageClass, assertCanSeeScenario, requireDeepLinkOwner } from '../accounts/access.ts';
import type { AppContext } from '../context.ts';
import type { DbOrTx } from '../db/client.ts';
import { assignments, classes, scenarioVersions } from '../db/schema.ts';
import { badRequest, HttpError } from '../http/errors.ts';
import { ASSIGNMENT_CUSTOM, CLAIM, LTI_VERSION, MESSAGE } from './claims.ts';
import { signWithCurrentKey } from './keys.ts';
import { randomToken } from './login.ts';
import { ltiDeepLinkRequests, ltiPlacements, ltiPlatforms } from './tables.ts';

const gone = () => new HttpError(410, 'This request from your learning platform has been answered or has expired; start again from the course’s “add activity”');

export async function deepLinkRequestOf(db: DbOrTx, user: SessionUser, id: string, now = new Date()): Promise<DeepLinkView> {
  await requireDeepLinkOwner(db, user, id);
  const [row] = await db
    .select({
      id: ltiDeepLinkRequests.id,
      platformName: ltiPlatforms.name,
      classId: ltiDeepLinkRequests.classId,
      className: classes.name,
      expiresAt: ltiDeepLinkRequests.expiresAt,
      usedAt: ltiDeepLinkRequests.usedAt,
      acceptsLineItem: ltiDeepLinkRequests.acceptsLineItem,
    })
    .from(ltiDeepLinkRequests)
    .innerJoin(ltiPlatforms, eq(ltiPlatforms.id, ltiDeepLinkRequests.platformId))
    .innerJoin(classes, eq(classes.id, ltiDeepLinkRequests.classId))
    .where(eq(ltiDeepLinkRequests.id, id));
  if (!row || row.usedAt || row.expiresAt < now) throw gone();
  return { id: row.id, platformName: row.platformName, classId: row.classId, className: row.className, expiresAt: row.expiresAt.toISOString(), acceptsLineItem: row.acceptsLineItem };
}

export async function answerDeepLink(ctx: AppContext, user: SessionUser, id: string, choice: DeepLinkChoice, base: string, now = new Date()): Promise<DeepLinkResponse> {
  return ctx.db.transaction(async (tx) => {
    await requireDeepLinkOwner(tx, user, id);
    const [request] = await tx
      .select({
        classId: ltiDeepLinkRequests.classId,
        platformId: ltiDeepLinkRequests.platformId,
        deploymentId: ltiDeepLinkRequests.deploymentId,
        contextId: ltiDeepLinkRequests.contextId,
        returnUrl: ltiDeepLinkRequests.returnUrl,
        data: ltiDeepLinkRequests.data,
        acceptsLineItem: ltiDeepLinkRequests.acceptsLineItem,
        expiresAt: ltiDeepLinkRequests.expiresAt,
        usedAt: ltiDeepLinkRequests.usedAt,
        issuer: ltiPlatforms.issuer,
        clientId: ltiPlatforms.clientId,
      })
      .from(ltiDeepLinkRequests)
      .innerJoin(ltiPlatforms, eq(ltiPlatforms.id, ltiDeepLinkRequests.platformId))
      .where(eq(ltiDeepLinkRequests.id, id))
      .for('update', { of: ltiDeepLinkRequests });
    if (!request || request.usedAt || request.expiresAt < now) throw gone();
    await assertCanManageClass(tx, user, request.classId);
    const scenario = await assertCanSeeScenario(tx, user, choice.scenarioId);
    if (scenario.archived) throw badRequest('scenarioId: this scenario is archived', { field: 'scenarioId' });
    if (scenario.publishedVersionId === null) throw badRequest('scenarioId: this scenario has no published version; publish one first', { field: 'scenarioId' });
    const [version] = await tx
      .select({ id: scenarioVersions.id, title: scenarioVersions.title, definition: scenarioVersions.definition })
      .from(scenarioVersions)
      .where(and(eq(scenarioVersions.id, scenario.publishedVersionId), eq(scenarioVersions.scenarioId, scenario.id)));
    if (!version) throw badRequest('scenarioId: the published version is missing', { field: 'scenarioId' });
    const title = choice.title ?? version.title;
    const [made] = await tx
      .insert(assignments)
      .values({
        classId: request.classId,
        scenarioVersionId: version.id,
        title,
        opensAt: new Date(choice.opensAt),
        dueAt: new Date(choice.dueAt),
        attemptsAllowed: choice.attemptsAllowed,
        createdBy: user.id,
      })
      .returning({ id: assignments.id });
    const assignmentId = made!.id;
    await tx.insert(ltiPlacements).values({ assignmentId, platformId: request.platformId, contextId: request.contextId });
    await tx.update(ltiDeepLinkRequests).set({ usedAt: now }).where(eq(ltiDeepLinkRequests.id, id));

    const summary = studentScenarioView(version.definition as ScenarioDefinition).summary;
    const item: Record<string, unknown> = {
      type: 'ltiResourceLink',
      title,
      text: summary.slice(0, 1000),
      url: `${base}/lti/launch`,
      custom: { [ASSIGNMENT_CUSTOM]: String(assignmentId) },
      available: { startDateTime: new Date(choice.opensAt).toISOString(), endDateTime: new Date(choice.dueAt).toISOString() },
      submission: { endDateTime: new Date(choice.dueAt).toISOString() },
    };
    if (request.acceptsLineItem) item.lineItem = { scoreMaximum: 100, label: title, resourceId: `loadline-assignment-${assignmentId}`, tag: 'loadline-grade' };
    const payload: Record<string, unknown> = {
      iss: request.clientId,
      aud: request.issuer,
      nonce: randomToken(18),
      [CLAIM.deploymentId]: request.deploymentId,
      [CLAIM.messageType]: MESSAGE.deepLinkingResponse,
      [CLAIM.version]: LTI_VERSION,
      [CLAIM.contentItems]: [item],
    };
    if (request.data !== null) payload[CLAIM.deepLinkingData] = request.data;
    const jwt = await signWithCurrentKey(tx, payload);
    ctx.log('info', 'lti deep link answered', { platformId: request.platformId, classId: request.classId, assignmentId });
    return { returnUrl: request.returnUrl, jwt, assignmentId };
  });
}
