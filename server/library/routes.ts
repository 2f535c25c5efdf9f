/** The scenario library: list, read, create, version, publish, restore, duplicate, import and export. */
import { and, asc, eq, isNotNull, type SQL } from 'drizzle-orm';
import {
  createScenarioSchema,
  duplicateScenarioSchema,
  exportQuerySchema,
  importQuerySchema,
  listScenariosQuerySchema,
  patchScenarioSchema,
  scenarioIdParamsSchema,
  scenarioVersionParamsSchema,
  updateScenarioSchema,
  versionActionSchema,
  type PracticeScenario,
} from '../../shared/api/scenarios.ts';
import type { ScenarioDefinition } from '../../shared/scenario.ts';
import { assertCanEditScenario, assertCanSeeScenario, assertCanSeeScenarioVersion, versionsWithheldFromPractice } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { scenarios, scenarioVersions, users } from '../db/schema.ts';
import { badRequest, conflict, HttpError, notFound } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { singleFileUpload, storedFileName } from '../http/uploads.ts';
import { parseBody, parseParams, parseQuery } from '../http/validate.ts';
import { appendVersion, exportFileName, insertScenario, listScenarios, parseScenarioDocument, scenarioDetail, versionColumns, versionSummary, visibleTo } from './store.ts';

const STAFF = ['instructor', 'admin'] as const;
export const SCENARIO_FILE_MAX_BYTES = 512 * 1024;

/** One optional file in the `file` field; a malformed upload is a 400 naming the field. */
const scenarioFile = singleFileUpload('file', { maxBytes: SCENARIO_FILE_MAX_BYTES, what: 'The file' });

function parseJsonFile(buffer: Buffer): unknown {
  const text = buffer.toString('utf8').replace(/^\uFEFF/, '');
  try {
    return JSON.parse(text);
  } catch (err) {
    throw badRequest(`The file is not valid JSON: ${(err as Error).message}`, { field: 'file', issues: [{ path: '(document)', message: 'Not valid JSON' }] });
  }
}

export function scenarioRoutes(ctx: AppContext) {
  const g = routeGroup('/api/scenarios');

  g.get('/', STAFF, async (req, res) => {
    const user = currentUser(req);
    const q = parseQuery(listScenariosQuerySchema, req);
    const filters: SQL[] = [];
    const visible = visibleTo(user);
    if (visible) filters.push(visible);
    if (q.owner === 'mine') filters.push(eq(scenarios.ownerId, user.id));
    if (!q.includeArchived) filters.push(eq(scenarios.archived, false));
    let items = await listScenarios(ctx.db, user, filters.length ? and(...filters) : undefined);
    if (q.fault) items = items.filter((s) => s.faultKinds.includes(q.fault!));
    if (q.test) items = items.filter((s) => s.testsExpected.includes(q.test!));
    if (q.difficulty) items = items.filter((s) => s.difficulty === q.difficulty);
    if (q.q) {
      const needle = q.q.toLowerCase();
      items = items.filter((s) => [s.title, s.summary, s.vehicleName, s.vehicleKind].some((t) => t.toLowerCase().includes(needle)));
    }
    res.json({ scenarios: items });
  });

  // Anyone signed in may practise a published, shared scenario, except one an open or upcoming assignment of their class runs; the list carries no faults.
  g.get('/practice', 'signed-in', async (req, res) => {
    const withheld = await versionsWithheldFromPractice(ctx.db, currentUser(req).id);
    const all = await ctx.db
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
    res.json({ scenarios: list });
  });

  g.post('/', STAFF, async (req, res) => {
    const user = currentUser(req);
    const input = parseBody(createScenarioSchema, req);
    const definition = parseScenarioDocument(input.definition, 'definition');
    const created = await ctx.db.transaction((tx) => insertScenario(tx, { definition, ownerId: user.id, visibility: input.visibility, note: input.note || 'Created' }));
    res.status(201).json(await scenarioDetail(ctx.db, user, created.scenarioId));
  });

  // Import: a multipart `file` field, or the document itself as the JSON body.
  g.post('/import', STAFF, scenarioFile, async (req, res) => {
    const user = currentUser(req);
    const { visibility } = parseQuery(importQuerySchema, req);
    let raw: unknown;
    let fileName = 'request body';
    if (req.file) {
      fileName = storedFileName(req, 'file');
      raw = parseJsonFile(req.file.buffer);
    } else if (req.is('application/json')) {
      raw = req.body;
    } else {
      throw badRequest('Attach the scenario file in the "file" field, or send the document as JSON', { field: 'file' });
    }
    const definition = parseScenarioDocument(raw);
    const created = await ctx.db.transaction((tx) =>
      insertScenario(tx, { definition, ownerId: user.id, visibility, note: `Imported from ${fileName}`.slice(0, 500) }),
    );
    res.status(201).json(await scenarioDetail(ctx.db, user, created.scenarioId));
  });

  g.get('/:id', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    await assertCanSeeScenario(ctx.db, user, id);
    res.json(await scenarioDetail(ctx.db, user, id));
  });

  g.get('/:id/versions/:versionId', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id, versionId } = parseParams(scenarioVersionParamsSchema, req);
    const { scenario } = await assertCanSeeScenarioVersion(ctx.db, user, id, versionId);
    const [v] = await ctx.db
      .select(versionColumns)
      .from(scenarioVersions)
      .leftJoin(users, eq(users.id, scenarioVersions.createdBy))
      .where(eq(scenarioVersions.id, versionId));
    if (!v) throw notFound('No such version');
    res.json({ ...versionSummary(v, scenario.publishedVersionId), scenarioId: id, definition: v.definition });
  });

  // An edit is a new immutable version.
  g.put('/:id', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const input = parseBody(updateScenarioSchema, req);
    const definition = parseScenarioDocument(input.definition, 'definition');
    await ctx.db.transaction(async (tx) => {
      const row = await assertCanEditScenario(tx, user, id, { lock: true });
      if (input.baseVersion !== undefined && input.baseVersion !== row.latestVersion) {
        throw conflict(`Version ${row.latestVersion} was saved since you opened version ${input.baseVersion}; reload to see it`, 'baseVersion');
      }
      await appendVersion(tx, row, definition, input.note, user.id);
    });
    res.json(await scenarioDetail(ctx.db, user, id));
  });

  g.patch('/:id', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const input = parseBody(patchScenarioSchema, req);
    await ctx.db.transaction(async (tx) => {
      await assertCanEditScenario(tx, user, id, { lock: true });
      await tx.update(scenarios).set({ ...input, updatedAt: new Date() }).where(eq(scenarios.id, id));
    });
    res.json(await scenarioDetail(ctx.db, user, id));
  });

  g.post('/:id/publish', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const { versionId } = parseBody(versionActionSchema, req);
    await ctx.db.transaction(async (tx) => {
      await assertCanEditScenario(tx, user, id, { lock: true });
      await assertCanSeeScenarioVersion(tx, user, id, versionId);
      await tx.update(scenarios).set({ publishedVersionId: versionId, updatedAt: new Date() }).where(eq(scenarios.id, id));
    });
    res.json(await scenarioDetail(ctx.db, user, id));
  });

  // Restore: a new version that copies an old one (history is never rewritten).
  g.post('/:id/restore', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const { versionId } = parseBody(versionActionSchema, req);
    await ctx.db.transaction(async (tx) => {
      const row = await assertCanEditScenario(tx, user, id, { lock: true });
      const { version } = await assertCanSeeScenarioVersion(tx, user, id, versionId);
      const definition = parseScenarioDocument(version.definition);
      await appendVersion(tx, row, definition, `Restored from version ${version.version}`, user.id);
    });
    res.json(await scenarioDetail(ctx.db, user, id));
  });

  // Duplicate: a private copy of the latest version, owned by the caller, to adapt.
  g.post('/:id/duplicate', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const input = parseBody(duplicateScenarioSchema, req);
    const source = await scenarioDetail(ctx.db, user, (await assertCanSeeScenario(ctx.db, user, id)).id);
    const title = (input.title ?? `Copy of ${source.definition.title}`).slice(0, 120);
    const definition = parseScenarioDocument({ ...source.definition, title });
    const created = await ctx.db.transaction((tx) =>
      insertScenario(tx, { definition, ownerId: user.id, visibility: 'private', note: `Duplicated from “${source.definition.title}” version ${source.latestVersion}` }),
    );
    res.status(201).json(await scenarioDetail(ctx.db, user, created.scenarioId));
  });

  g.get('/:id/export', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const { version } = parseQuery(exportQuerySchema, req);
    const row = await assertCanSeeScenario(ctx.db, user, id);
    const wanted = version ?? row.latestVersion;
    const [v] = await ctx.db
      .select({ definition: scenarioVersions.definition })
      .from(scenarioVersions)
      .where(and(eq(scenarioVersions.scenarioId, id), eq(scenarioVersions.version, wanted)));
    if (!v) throw new HttpError(404, `This scenario has no version ${wanted}`, { field: 'version' });
    const def = v.definition as ScenarioDefinition;
    res.setHeader('Content-Disposition', `attachment; filename="${exportFileName(row.slug, wanted)}"`);
    res.type('application/json').send(`${JSON.stringify(def, null, 2)}\n`);
  });

  return g;
}
