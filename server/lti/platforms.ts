/** Platform registrations: what an admin enters about a learning platform, and the lookups a launch makes. */
import { and, asc, count, eq, inArray, notInArray } from 'drizzle-orm';
import type { Platform, PlatformInput } from '../../shared/api/lti.ts';
import type { Db, DbOrTx } from '../db/client.ts';
import { conflict, notFound } from '../http/errors.ts';
import { ltiAccounts, ltiContexts, ltiDeployments, ltiPlatforms } from './tables.ts';

export interface PlatformRow {
  id: number;
  name: string;
  issuer: string;
  clientId: string;
  authUrl: string;
  tokenUrl: string;
  jwksUrl: string;
}

const columns = {
  id: ltiPlatforms.id,
  name: ltiPlatforms.name,
  issuer: ltiPlatforms.issuer,
  clientId: ltiPlatforms.clientId,
  authUrl: ltiPlatforms.authUrl,
  tokenUrl: ltiPlatforms.tokenUrl,
  jwksUrl: ltiPlatforms.jwksUrl,
};

const isUniqueViolation = (err: unknown) => (err as { code?: string }).code === '23505' || (err as { cause?: { code?: string } }).cause?.code === '23505';

export async function listPlatforms(db: DbOrTx): Promise<Platform[]> {
  const rows = await db.select({ ...columns, createdAt: ltiPlatforms.createdAt }).from(ltiPlatforms).orderBy(asc(ltiPlatforms.name), asc(ltiPlatforms.id));
  if (rows.length === 0) return [];
  const ids = rows.map((r) => r.id);
  const [deployments, accounts, contexts] = await Promise.all([
    db.select({ platformId: ltiDeployments.platformId, deploymentId: ltiDeployments.deploymentId }).from(ltiDeployments).where(inArray(ltiDeployments.platformId, ids)).orderBy(asc(ltiDeployments.createdAt)),
    db.select({ platformId: ltiAccounts.platformId, n: count() }).from(ltiAccounts).where(inArray(ltiAccounts.platformId, ids)).groupBy(ltiAccounts.platformId),
    db.select({ platformId: ltiContexts.platformId, n: count() }).from(ltiContexts).where(inArray(ltiContexts.platformId, ids)).groupBy(ltiContexts.platformId),
  ]);
  return rows.map((r) => ({
    ...r,
    createdAt: r.createdAt.toISOString(),
    deploymentIds: deployments.filter((d) => d.platformId === r.id).map((d) => d.deploymentId),
    accounts: accounts.find((a) => a.platformId === r.id)?.n ?? 0,
    classes: contexts.find((c) => c.platformId === r.id)?.n ?? 0,
  }));
}

async function setDeployments(db: DbOrTx, platformId: number, deploymentIds: string[]): Promise<void> {
  await db.delete(ltiDeployments).where(and(eq(ltiDeployments.platformId, platformId), notInArray(ltiDeployments.deploymentId, deploymentIds)));
  await db
    .insert(ltiDeployments)
    .values(deploymentIds.map((deploymentId) => ({ platformId, deploymentId })))
    .onConflictDoNothing();
}

const duplicate = () => conflict('A platform with this issuer and client id is registered already', 'clientId');

export async function createPlatform(db: Db, input: PlatformInput): Promise<number> {
  try {
    return await db.transaction(async (tx) => {
      const { deploymentIds, ...fields } = input;
      const [row] = await tx.insert(ltiPlatforms).values(fields).returning({ id: ltiPlatforms.id });
      await setDeployments(tx, row!.id, deploymentIds);
      return row!.id;
    });
  } catch (err) {
    if (isUniqueViolation(err)) throw duplicate();
    throw err;
  }
}

export async function updatePlatform(db: Db, id: number, input: PlatformInput): Promise<void> {
  try {
    await db.transaction(async (tx) => {
      const { deploymentIds, ...fields } = input;
      const updated = await tx.update(ltiPlatforms).set({ ...fields, updatedAt: new Date() }).where(eq(ltiPlatforms.id, id)).returning({ id: ltiPlatforms.id });
      if (updated.length === 0) throw notFound('No such platform');
      await setDeployments(tx, id, deploymentIds);
    });
  } catch (err) {
    if (isUniqueViolation(err)) throw duplicate();
    throw err;
  }
}

/** Removes a registration and every link to it; the Loadline accounts, classes and attempts stay. */
export async function deletePlatform(db: DbOrTx, id: number): Promise<void> {
  const gone = await db.delete(ltiPlatforms).where(eq(ltiPlatforms.id, id)).returning({ id: ltiPlatforms.id });
  if (gone.length === 0) throw notFound('No such platform');
}

export async function platformById(db: DbOrTx, id: number): Promise<PlatformRow | null> {
  const [row] = await db.select(columns).from(ltiPlatforms).where(eq(ltiPlatforms.id, id));
  return row ?? null;
}

/** The registrations of an issuer, narrowed to a client id when one is given. */
export async function platformsOfIssuer(db: DbOrTx, issuer: string, clientId?: string): Promise<PlatformRow[]> {
  return db
    .select(columns)
    .from(ltiPlatforms)
    .where(clientId ? and(eq(ltiPlatforms.issuer, issuer), eq(ltiPlatforms.clientId, clientId)) : eq(ltiPlatforms.issuer, issuer));
}

export async function hasDeployment(db: DbOrTx, platformId: number, deploymentId: string): Promise<boolean> {
  const [row] = await db
    .select({ platformId: ltiDeployments.platformId })
    .from(ltiDeployments)
    .where(and(eq(ltiDeployments.platformId, platformId), eq(ltiDeployments.deploymentId, deploymentId)));
  return row !== undefined;
}

/** The web origins of every registered platform (its issuer's and its authorisation endpoint's), for the frame and form policy. */
export async function platformOrigins(db: DbOrTx): Promise<string[]> {
  const rows = await db.select({ issuer: ltiPlatforms.issuer, authUrl: ltiPlatforms.authUrl }).from(ltiPlatforms);
  const origins = new Set<string>();
  for (const r of rows) {
    for (const url of [r.issuer, r.authUrl]) {
      try {
        const origin = new URL(url).origin;
        if (origin !== 'null') origins.add(origin);
      } catch {
        // A malformed address adds nothing.
      }
    }
  }
  return [...origins].sort();
}
