/** Payloads of the scenario library API (/api/scenarios). */
import { z } from 'zod';
import { DIFFICULTIES, diagnosticTestSchema, faultKindSchema, scenarioDocumentSchema, VEHICLE_KINDS } from '../scenario.ts';

export const VISIBILITIES = ['private', 'shared'] as const;
export const visibilitySchema = z.enum(VISIBILITIES, { error: 'Visibility must be "private" or "shared"' });
export type Visibility = z.infer<typeof visibilitySchema>;

export const scenarioIdParamsSchema = z.object({ id: z.coerce.number().int().positive('id must be a positive whole number') });
export const scenarioVersionParamsSchema = z.object({
  id: z.coerce.number().int().positive('id must be a positive whole number'),
  versionId: z.coerce.number().int().positive('versionId must be a positive whole number'),
});

export const listScenariosQuerySchema = z.object({
  q: z.string().trim().max(120, 'q must be at most 120 characters').optional(),
  fault: faultKindSchema.optional(),
  test: diagnosticTestSchema.optional(),
  difficulty: z.enum(DIFFICULTIES).optional(),
  /** `mine`: only scenarios I own. */
  owner: z.enum(['mine', 'any']).optional(),
  includeArchived: z
    .enum(['true', 'false'])
    .optional()
    .transform((v) => v === 'true'),
});
export type ListScenariosQuery = z.input<typeof listScenariosQuerySchema>;

const ownerSchema = z.object({ id: z.number().int(), name: z.string() }).nullable();

export const scenarioListItemSchema = z.object({
  id: z.number().int(),
  slug: z.string(),
  title: z.string(),
  summary: z.string(),
  difficulty: z.enum(DIFFICULTIES),
  vehicleName: z.string(),
  vehicleKind: z.enum(VEHICLE_KINDS),
  ratedCurrentA: z.number(),
  faultKinds: z.array(faultKindSchema),
  testsExpected: z.array(diagnosticTestSchema),
  visibility: visibilitySchema,
  owner: ownerSchema,
  latestVersion: z.number().int(),
  publishedVersion: z.number().int().nullable(),
  archived: z.boolean(),
  canEdit: z.boolean(),
  updatedAt: z.string(),
});
export type ScenarioListItem = z.infer<typeof scenarioListItemSchema>;
export const scenarioListResponseSchema = z.object({ scenarios: z.array(scenarioListItemSchema) });

export const scenarioVersionSummarySchema = z.object({
  id: z.number().int(),
  version: z.number().int(),
  title: z.string(),
  note: z.string(),
  createdBy: ownerSchema,
  createdAt: z.string(),
  published: z.boolean(),
});
export type ScenarioVersionSummary = z.infer<typeof scenarioVersionSummarySchema>;

/** A scenario with its version history and the definition of its latest version. */
export const scenarioDetailSchema = z.object({
  id: z.number().int(),
  slug: z.string(),
  visibility: visibilitySchema,
  owner: ownerSchema,
  archived: z.boolean(),
  canEdit: z.boolean(),
  latestVersion: z.number().int(),
  latestVersionId: z.number().int(),
  publishedVersionId: z.number().int().nullable(),
  versions: z.array(scenarioVersionSummarySchema),
  definition: scenarioDocumentSchema,
});
export type ScenarioDetail = z.infer<typeof scenarioDetailSchema>;

export const scenarioVersionDetailSchema = scenarioVersionSummarySchema.extend({ scenarioId: z.number().int(), definition: scenarioDocumentSchema });
export type ScenarioVersionDetail = z.infer<typeof scenarioVersionDetailSchema>;

const noteSchema = z.string().trim().max(500, 'note must be at most 500 characters').default('');

/**
 * Create and update carry the whole document; the server restores and parses it
 * with the shared scenario schema, so its issues name paths like `definition.vehicle.params.battery.cca`.
 */
export const createScenarioSchema = z.strictObject({
  definition: z.unknown(),
  visibility: visibilitySchema.default('private'),
  note: noteSchema,
});
export type CreateScenarioInput = z.input<typeof createScenarioSchema>;

export const updateScenarioSchema = z.strictObject({
  definition: z.unknown(),
  note: noteSchema,
  /** The version the edit started from; a newer one on the server answers 409. */
  baseVersion: z.number().int().positive().optional(),
});
export type UpdateScenarioInput = z.input<typeof updateScenarioSchema>;

export const patchScenarioSchema = z.strictObject({
  visibility: visibilitySchema.optional(),
  archived: z.boolean().optional(),
});
export type PatchScenarioInput = z.infer<typeof patchScenarioSchema>;

export const versionActionSchema = z.strictObject({
  versionId: z.number({ error: 'versionId is required' }).int().positive('versionId must be a positive whole number'),
});
export type VersionActionInput = z.infer<typeof versionActionSchema>;

export const duplicateScenarioSchema = z.strictObject({
  title: z.string().trim().min(3, 'title must be at least 3 characters').max(120, 'title must be at most 120 characters').optional(),
});
export type DuplicateScenarioInput = z.infer<typeof duplicateScenarioSchema>;

export const importQuerySchema = z.object({ visibility: visibilitySchema.default('private') });

export const exportQuerySchema = z.object({ version: z.coerce.number().int().positive('version must be a positive whole number').optional() });

/** What a student may list for practice: no faults, nothing that points at them. */
export const practiceScenarioSchema = z.object({
  id: z.number().int(),
  title: z.string(),
  summary: z.string(),
  difficulty: z.enum(DIFFICULTIES),
  vehicleName: z.string(),
  vehicleKind: z.enum(VEHICLE_KINDS),
});
export type PracticeScenario = z.infer<typeof practiceScenarioSchema>;
export const practiceListResponseSchema = z.object({ scenarios: z.array(practiceScenarioSchema) });
