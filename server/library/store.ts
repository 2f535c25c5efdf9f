/**
 * Scenario storage: a scenario row plus immutable numbered versions, each
 * holding a whole document valid against the shared scenario schema.
 */
import { randomBytes } from 'node:crypto';
import { and, asc, desc, eq, inArray, isNotNull, or, type SQL } from 'drizzle-orm';
import type { PracticeScenario, ScenarioDetail, ScenarioListItem, ScenarioVersionSummary, Visibility } from '../../shared/api/scenarios.ts';
import type { SessionUser } from '../../shared/api/auth.ts';
import { formatIssues, safeRestoreScenario, scenarioFaultKinds, scenarioFieldInWords, type ScenarioDefinition } from '../../shared/scenario.ts';
import { assertCanEditScenario, assertCanSeeScenarioVersion, canEditScenario } from '../accounts/access.ts';
import type { Db, DbOrTx } from '../db/client.ts';
import { scenarios, scenarioVersions, users } from '../db/schema.ts';
import { badRequest, conflict, HttpError, notFound } from '../http/errors.ts';

type Who = Pick<SessionUser, 'id' | 'role'>;

/**
 * Restores and parses a document; a bad one answers 400 with every issue, each
 * path prefixed by `prefix` (e.g. `definition`) when the document sits inside a body.
 */
export function parseScenarioDocument(raw: unknown, prefix = ''): ScenarioDefinition {
  const r = safeRestoreScenario(raw);
  if (r.success) return r.data;
  const issues = formatIssues(r.error).map((i) => ({
    path: prefix ? (i.path === '(document)' ? prefix : `${prefix}.${i.path}`) : i.path,
    message: i.message,
  }));
  const first = issues[0] ?? { path: prefix || '(document)', message: 'Invalid scenario' };
  const more = issues.length > 1 ? ` (and ${issues.length - 1} more)` : '';
  // The message names the field in words ("Vehicle › Battery › Cold-cranking amps"); `field` and each issue's `path` keep the file's own dotted path.
  throw badRequest(`${scenarioFieldInWords(first.path)}: ${first.message}${more}`, { field: first.path, issues });
}

export function slugFor(title: string): string {
  const base = title
    .toLowerCase()
    .normalize('NFKD')
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 60);
  return `${base || 'scenario'}-${randomBytes(3).toString('hex')}`;
}

/** Creates a scenario and its version 1 in the given transaction. */
export async function insertScenario(
  tx: DbOrTx,
  opts: { definition: ScenarioDefinition; ownerId: number | null; visibility: Visibility; note: string; slug?: string; publish?: boolean },
): Promise<{ scenarioId: number; versionId: number }> {
  const [s] = await tx
    .insert(scenarios)
    .values({ slug: opts.slug ?? slugFor(opts.definition.title), ownerId: opts.ownerId, visibility: opts.visibility, latestVersion: 1 })
    .returning({ id: scenarios.id });
  if (!s) throw new HttpError(500, 'Scenario was not created');
  const [v] = await tx
    .insert(scenarioVersions)
    .values({ scenarioId: s.id, version: 1, title: opts.definition.title, definition: opts.definition, note: opts.note, createdBy: opts.ownerId })
    .returning({ id: scenarioVersions.id });
  if (!v) throw new HttpError(500, 'Scenario version was not created');
  if (opts.publish) await tx.update(scenarios).set({ publishedVersionId: v.id }).where(eq(scenarios.id, s.id));
  return { scenarioId: s.id, versionId: v.id };
}

/** Appends the next version; call with the scenario row locked (assertCanEditScenario with lock). */
export async function appendVersion(
  tx: DbOrTx,
  scenario: { id: number; latestVersion: number },
  definition: ScenarioDefinition,
  note: string,
  userId: number,
): Promise<{ versionId: number; version: number }> {
  const version = scenario.latestVersion + 1;
  const [v] = await tx
    .insert(scenarioVersions)
    .values({ scenarioId: scenario.id, version, title: definition.title, definition, note, createdBy: userId })
    .returning({ id: scenarioVersions.id });
  if (!v) throw new HttpError(500, 'Scenario version was not created');
  await tx.update(scenarios).set({ latestVersion: version, updatedAt: new Date() }).where(eq(scenarios.id, scenario.id));
  return { versionId: v.id, version };
}

/** Which scenarios a user may list: admin all, instructor shared and own. */
export function visibleTo(user: Who): SQL | undefined {
  if (user.role === 'admin') return undefined;
  return or(eq(scenarios.visibility, 'shared'), eq(scenarios.ownerId, user.id));
}

/** A scenario's own columns with its owner's name, as the list and the detail read them. */
const scenarioColumns = {
  id: scenarios.id,
  slug: scenarios.slug,
  ownerId: scenarios.ownerId,
  ownerName: users.name,
  visibility: scenarios.visibility,
  publishedVersionId: scenarios.publishedVersionId,
  latestVersion: scenarios.latestVersion,
  archived: scenarios.archived,
};

export async function listScenarios(db: DbOrTx, user: Who, where: SQL | undefined): Promise<ScenarioListItem[]> {
  const rows = await db
    .select({ ...scenarioColumns, updatedAt: scenarios.updatedAt, definition: scenarioVersions.definition })
    .from(scenarios)
    .innerJoin(scenarioVersions, and(eq(scenarioVersions.scenarioId, scenarios.id), eq(scenarioVersions.version, scenarios.latestVersion)))
    .leftJoin(users, eq(users.id, scenarios.ownerId))
    .where(where)
    .orderBy(desc(scenarios.updatedAt), desc(scenarios.id));
  const published = await publishedNumbers(db, rows.map((r) => r.publishedVersionId).filter((x): x is number => x !== null));
  return rows.map((r) => {
    const def = r.definition as ScenarioDefinition;
    return {
      id: r.id,
      slug: r.slug,
      title: def.title,
      summary: def.summary,
      difficulty: def.difficulty,
      vehicleName: def.vehicle.name,
      vehicleKind: def.vehicle.kind,
      ratedCurrentA: def.vehicle.params.alternator.ratedCurrentA,
      faultKinds: scenarioFaultKinds(def),
      testsExpected: def.testsExpected,
      visibility: r.visibility as Visibility,
      owner: r.ownerId !== null && r.ownerName !== null ? { id: r.ownerId, name: r.ownerName } : null,
      latestVersion: r.latestVersion,
      publishedVersion: r.publishedVersionId !== null ? (published.get(r.publishedVersionId) ?? null) : null,
      archived: r.archived,
      canEdit: canEditScenario(user, r),
      updatedAt: r.updatedAt.toISOString(),
    };
  });
}

async function publishedNumbers(db: DbOrTx, ids: number[]): Promise<Map<number, number>> {
  const map = new Map<number, number>();
  if (!ids.length) return map;
  const rows = await db.select({ id: scenarioVersions.id, version: scenarioVersions.version }).from(scenarioVersions).where(inArray(scenarioVersions.id, ids));
  for (const r of rows) map.set(r.id, r.version);
  return map;
}

/** The columns of a version as the library shows it (join `users` on `createdBy` for the author's name). */
export const versionColumns = {
  id: scenarioVersions.id,
  version: scenarioVersions.version,
  title: scenarioVersions.title,
  note: scenarioVersions.note,
  createdById: scenarioVersions.createdBy,
  createdByName: users.name,
  createdAt: scenarioVersions.createdAt,
  definition: scenarioVersions.definition,
};

export async function scenarioDetail(db: DbOrTx, user: Who, scenarioId: number): Promise<ScenarioDetail> {
  const [s] = await db
    .select(scenarioColumns)
    .from(scenarios)
    .leftJoin(users, eq(users.id, scenarios.ownerId))
    .where(eq(scenarios.id, scenarioId));
  if (!s) throw notFound('No such scenario');
  const versions = await db
    .select(versionColumns)
    .from(scenarioVersions)
    .leftJoin(users, eq(users.id, scenarioVersions.createdBy))
    .where(eq(scenarioVersions.scenarioId, scenarioId))
    .orderBy(desc(scenarioVersions.version));
  const latest = versions[0];
  if (!latest) throw notFound('This scenario has no versions');
  return {
    id: s.id,
    slug: s.slug,
    visibility: s.visibility as Visibility,
    owner: s.ownerId !== null && s.ownerName !== null ? { id: s.ownerId, name: s.ownerName } : null,
    archived: s.archived,
    canEdit: canEditScenario(user, s),
    latestVersion: s.latestVersion,
    latestVersionId: latest.id,
    publishedVersionId: s.publishedVersionId,
    versions: versions.map((v) => versionSummary(v, s.publishedVersionId)),
    definition: latest.definition as ScenarioDefinition,
  };
}

export function versionSummary(
  v: { id: number; version: number; title: string; note: string; createdById: number | null; createdByName: string | null; createdAt: Date },
  publishedVersionId: number | null,
): ScenarioVersionSummary {
  return {
    id: v.id,
    version: v.version,
    title: v.title,
    note: v.note,
    createdBy: v.createdById !== null && v.createdByName !== null ? { id: v.createdById, name: v.createdByName } : null,
    createdAt: v.createdAt.toISOString(),
    published: v.id === publishedVersionId,
  };
}

/** The file name an exported document is offered under. */
export function exportFileName(slug: string, version: number): string {
  return `${slug}-v${version}.loadline.json`;
}

/** The scenarios a user may list: their own or shared ones (an admin: all), archived ones only when asked. */
export async function scenarioList(db: DbOrTx, user: Who, opts: { mine: boolean; includeArchived: boolean }): Promise<ScenarioListItem[]> {
  const filters: SQL[] = [];
  const visible = visibleTo(user);
  if (visible) filters.push(visible);
  if (opts.mine) filters.push(eq(scenarios.ownerId, user.id));
  if (!opts.includeArchived) filters.push(eq(scenarios.archived, false));
  return listScenarios(db, user, filters.length ? and(...filters) : undefined);
}

/** The published, shared scenarios anyone may practise, less the versions withheld from this student; no faults. */
export async function practiceScenarios(db: DbOrTx, withheld: ReadonlySet<number>): Promise<PracticeScenario[]> {
  const all = await db
    .select({ id: scenarios.id, versionId: scenarioVersions.id, definition: scenarioVersions.definition })
    .from(scenarios)
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, scenarios.publishedVersionId))
    .where(and(eq(scenarios.visibility, 'shared'), eq(scenarios.archived, false), isNotNull(scenarios.publishedVersionId)))
    .orderBy(asc(scenarios.id));
  const rows = all.filter((r) => !withheld.has(r.versionId));
  const order = { intro: 0, core: 1, advanced: 2 } as const;
  const list: PracticeScenario[] = rows
    .map((r) => {
      const def = r.definition as ScenarioDefinition;
      return { id: r.id, title: def.title, summary: def.summary, difficulty: def.difficulty, vehicleName: def.vehicle.name, vehicleKind: def.vehicle.kind };
    })
    .sort((a, b) => order[a.difficulty] - order[b.difficulty] || a.title.localeCompare(b.title));
  return list;
}

/** Creates a scenario and its version 1 in a transaction of its own. */
export function createScenario(db: Db, opts: Parameters<typeof insertScenario>[1]): Promise<{ scenarioId: number; versionId: number }> {
  return db.transaction((tx) => insertScenario(tx, opts));
}

/** One version of a scenario, with its document. */
export async function versionDetail(db: DbOrTx, scenarioId: number, versionId: number, publishedVersionId: number | null) {
  const [v] = await db
    .select(versionColumns)
    .from(scenarioVersions)
    .leftJoin(users, eq(users.id, scenarioVersions.createdBy))
    .where(eq(scenarioVersions.id, versionId));
  if (!v) throw notFound('No such version');
  return { ...versionSummary(v, publishedVersionId), scenarioId, definition: v.definition };
}

/** An edit: a new immutable version, refused when another was saved since `baseVersion`. */
export async function saveVersion(db: Db, user: SessionUser, scenarioId: number, input: { definition: ScenarioDefinition; note: string; baseVersion?: number }): Promise<void> {
  await db.transaction(async (tx) => {
    const row = await assertCanEditScenario(tx, user, scenarioId, { lock: true });
    if (input.baseVersion !== undefined && input.baseVersion !== row.latestVersion) {
      throw conflict(`Version ${row.latestVersion} was saved since you opened version ${input.baseVersion}; reload to see it`, 'baseVersion');
    }
    await appendVersion(tx, row, input.definition, input.note, user.id);
  });
}

/** Changes a scenario's own fields (not its document). */
export async function patchScenario(db: Db, user: SessionUser, scenarioId: number, input: Partial<Pick<typeof scenarios.$inferInsert, 'visibility' | 'archived'>>): Promise<void> {
  await db.transaction(async (tx) => {
    await assertCanEditScenario(tx, user, scenarioId, { lock: true });
    await tx.update(scenarios).set({ ...input, updatedAt: new Date() }).where(eq(scenarios.id, scenarioId));
  });
}

export async function publishVersion(db: Db, user: SessionUser, scenarioId: number, versionId: number): Promise<void> {
  await db.transaction(async (tx) => {
    await assertCanEditScenario(tx, user, scenarioId, { lock: true });
    await assertCanSeeScenarioVersion(tx, user, scenarioId, versionId);
    await tx.update(scenarios).set({ publishedVersionId: versionId, updatedAt: new Date() }).where(eq(scenarios.id, scenarioId));
  });
}

/** Restore: a new version that copies an old one (history is never rewritten). */
export async function restoreVersion(db: Db, user: SessionUser, scenarioId: number, versionId: number): Promise<void> {
  await db.transaction(async (tx) => {
    const row = await assertCanEditScenario(tx, user, scenarioId, { lock: true });
    const { version } = await assertCanSeeScenarioVersion(tx, user, scenarioId, versionId);
    const definition = parseScenarioDocument(version.definition);
    await appendVersion(tx, row, definition, `Restored from version ${version.version}`, user.id);
  });
}

/** The document of a scenario's numbered version. */
export async function definitionOfVersion(db: DbOrTx, scenarioId: number, version: number): Promise<ScenarioDefinition> {
  const [v] = await db
    .select({ definition: scenarioVersions.definition })
    .from(scenarioVersions)
    .where(and(eq(scenarioVersions.scenarioId, scenarioId), eq(scenarioVersions.version, version)));
  if (!v) throw new HttpError(404, `This scenario has no version ${version}`, { field: 'version' });
  return v.definition as ScenarioDefinition;
}
