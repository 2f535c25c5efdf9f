/** The scenario library: list, read, create, version, publish, restore, duplicate, import and export. */
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
} from '../../shared/api/scenarios.ts';
import { assertCanSeeScenario, assertCanSeeScenarioVersion, versionsWithheldFromPractice } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { badRequest } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { singleFileUpload, storedFileName } from '../http/uploads.ts';
import { parseBody, parseParams, parseQuery } from '../http/validate.ts';
import {
  createScenario,
  definitionOfVersion,
  exportFileName,
  parseScenarioDocument,
  patchScenario,
  practiceScenarios,
  publishVersion,
  restoreVersion,
  saveVersion,
  scenarioDetail,
  scenarioList,
  versionDetail,
} from './store.ts';

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
    let items = await scenarioList(ctx.db, user, { mine: q.owner === 'mine', includeArchived: q.includeArchived });
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
    const list = await practiceScenarios(ctx.db, withheld);
    res.json({ scenarios: list });
  });

  g.post('/', STAFF, async (req, res) => {
    const user = currentUser(req);
    const input = parseBody(createScenarioSchema, req);
    const definition = parseScenarioDocument(input.definition, 'definition');
    const created = await createScenario(ctx.db, { definition, ownerId: user.id, visibility: input.visibility, note: input.note || 'Created' });
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
    const created = await createScenario(ctx.db, { definition, ownerId: user.id, visibility, note: `Imported from ${fileName}`.slice(0, 500) });
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
    res.json(await versionDetail(ctx.db, id, versionId, scenario.publishedVersionId));
  });

  // An edit is a new immutable version.
  g.put('/:id', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const input = parseBody(updateScenarioSchema, req);
    const definition = parseScenarioDocument(input.definition, 'definition');
    await saveVersion(ctx.db, user, id, { definition, note: input.note, baseVersion: input.baseVersion });
    res.json(await scenarioDetail(ctx.db, user, id));
  });

  g.patch('/:id', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const input = parseBody(patchScenarioSchema, req);
    await patchScenario(ctx.db, user, id, input);
    res.json(await scenarioDetail(ctx.db, user, id));
  });

  g.post('/:id/publish', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const { versionId } = parseBody(versionActionSchema, req);
    await publishVersion(ctx.db, user, id, versionId);
    res.json(await scenarioDetail(ctx.db, user, id));
  });

  // Restore: a new version that copies an old one (history is never rewritten).
  g.post('/:id/restore', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const { versionId } = parseBody(versionActionSchema, req);
    await restoreVersion(ctx.db, user, id, versionId);
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
    const created = await createScenario(ctx.db, { definition, ownerId: user.id, visibility: 'private', note: `Duplicated from “${source.definition.title}” version ${source.latestVersion}` });
    res.status(201).json(await scenarioDetail(ctx.db, user, created.scenarioId));
  });

  g.get('/:id/export', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(scenarioIdParamsSchema, req);
    const { version } = parseQuery(exportQuerySchema, req);
    const row = await assertCanSeeScenario(ctx.db, user, id);
    const wanted = version ?? row.latestVersion;
    const def = await definitionOfVersion(ctx.db, id, wanted);
    res.setHeader('Content-Disposition', `attachment; filename="${exportFileName(row.slug, wanted)}"`);
    res.type('application/json').send(`${JSON.stringify(def, null, 2)}\n`);
  });

  return g;
}
