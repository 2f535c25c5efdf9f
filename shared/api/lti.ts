/**
 * Payloads of the learning-platform link (LTI 1.3) as the admin page, the
 * deep-linking picker, the grade-sync panel and the class page's roster sync
 * use them (/api/lti).
 */
import { z } from 'zod';

const httpUrl = (field: string) =>
  z
    .string({ error: `${field} is required` })
    .trim()
    .min(1, `${field} is required`)
    .max(2000, `${field} must be at most 2000 characters`)
    .refine((v) => {
      try {
        const u = new URL(v);
        return u.protocol === 'https:' || u.protocol === 'http:';
      } catch {
        return false;
      }
    }, `${field} must be an http(s) address`);

export const platformInputSchema = z.object({
  name: z.string().trim().min(1, 'name is required').max(120, 'name must be at most 120 characters'),
  issuer: httpUrl('issuer').refine((v) => v.length <= 500, 'issuer must be at most 500 characters'),
  clientId: z.string().trim().min(1, 'clientId is required').max(255, 'clientId must be at most 255 characters'),
  authUrl: httpUrl('authUrl'),
  tokenUrl: httpUrl('tokenUrl'),
  jwksUrl: httpUrl('jwksUrl'),
  deploymentIds: z
    .array(z.string().trim().min(1, 'a deployment id must not be empty').max(255, 'a deployment id must be at most 255 characters'))
    .min(1, 'deploymentIds: give at least one deployment id')
    .max(50, 'deploymentIds: at most 50')
    .refine((ids) => new Set(ids).size === ids.length, 'deploymentIds: each deployment id once'),
});
export type PlatformInput = z.infer<typeof platformInputSchema>;

export const platformSchema = platformInputSchema.extend({
  id: z.number().int(),
  createdAt: z.string(),
  accounts: z.number().int(),
  classes: z.number().int(),
});
export type Platform = z.infer<typeof platformSchema>;

export const platformIdParamsSchema = z.object({ id: z.coerce.number().int().positive('id must be a positive whole number') });

export const signingKeySchema = z.object({
  kid: z.string(),
  createdAt: z.string(),
  retiredAt: z.string().nullable(),
  /** When a retired key leaves the public key set. */
  publishedUntil: z.string().nullable(),
  current: z.boolean(),
});
export type SigningKey = z.infer<typeof signingKeySchema>;

/** What a platform's admin pastes on their side when adding Loadline. */
export const toolConfigSchema = z.object({
  loginUrl: z.string(),
  redirectUrl: z.string(),
  jwksUrl: z.string(),
  deepLinkingUrl: z.string(),
  targetLinkUri: z.string(),
  domain: z.string(),
  keys: z.array(signingKeySchema),
});
export type ToolConfig = z.infer<typeof toolConfigSchema>;

export const deepLinkIdParamsSchema = z.object({ id: z.string().regex(/^[A-Za-z0-9_-]{20,64}$/, 'id is not a deep-linking request') });

export const deepLinkViewSchema = z.object({
  id: z.string(),
  platformName: z.string(),
  classId: z.number().int(),
  className: z.string(),
  expiresAt: z.string(),
  acceptsLineItem: z.boolean(),
});
export type DeepLinkView = z.infer<typeof deepLinkViewSchema>;

export const deepLinkChoiceSchema = z
  .object({
    scenarioId: z.number({ error: 'scenarioId must be a number' }).int().positive('scenarioId must be a positive whole number'),
    title: z.string().trim().min(1, 'title must not be empty').max(160, 'title must be at most 160 characters').optional(),
    opensAt: z.iso.datetime({ offset: true, error: 'opensAt must be a date and time' }),
    dueAt: z.iso.datetime({ offset: true, error: 'dueAt must be a date and time' }),
    attemptsAllowed: z.number({ error: 'attemptsAllowed must be a number' }).int('attemptsAllowed must be a whole number').min(1, 'attemptsAllowed must be at least 1').max(20, 'attemptsAllowed must be at most 20'),
  })
  .refine((v) => new Date(v.dueAt) > new Date(v.opensAt), { path: ['dueAt'], message: 'dueAt must be after opensAt' });
export type DeepLinkChoice = z.infer<typeof deepLinkChoiceSchema>;

/** The signed answer the browser posts back to the platform. */
export const deepLinkResponseSchema = z.object({ returnUrl: z.string(), jwt: z.string(), assignmentId: z.number().int() });
export type DeepLinkResponse = z.infer<typeof deepLinkResponseSchema>;

export const GRADE_SYNC_STATUSES = ['pending', 'sent', 'failed'] as const;
export const gradeSyncRowSchema = z.object({
  id: z.number().int(),
  attemptId: z.number().int(),
  studentId: z.number().int(),
  studentName: z.string(),
  scoreGiven: z.number().nullable(),
  status: z.enum(GRADE_SYNC_STATUSES),
  tries: z.number().int(),
  lastError: z.string().nullable(),
  nextTryAt: z.string().nullable(),
  sentAt: z.string().nullable(),
});
export type GradeSyncRow = z.infer<typeof gradeSyncRowSchema>;
export const gradeSyncSchema = z.object({ linked: z.boolean(), platformName: z.string().nullable(), rows: z.array(gradeSyncRowSchema) });
export type GradeSync = z.infer<typeof gradeSyncSchema>;
export const outboxIdParamsSchema = z.object({ id: z.coerce.number().int().positive('id must be a positive whole number') });
export const assignmentIdParamsSchema = z.object({ id: z.coerce.number().int().positive('id must be a positive whole number') });
export const classIdParamsSchema = z.object({ id: z.coerce.number().int().positive('id must be a positive whole number') });

export const classLinkSchema = z.object({
  linked: z.boolean(),
  platformName: z.string().nullable(),
  contextTitle: z.string().nullable(),
  /** The platform offers its roster (Names and Role Provisioning Services). */
  canSync: z.boolean(),
  lastSync: z.object({ at: z.string(), added: z.number().int(), updated: z.number().int(), gone: z.number().int() }).nullable(),
  gone: z.array(z.object({ userId: z.number().int(), name: z.string(), role: z.string(), goneAt: z.string() })),
});
export type ClassLink = z.infer<typeof classLinkSchema>;

export const rosterSyncResultSchema = z.object({
  added: z.array(z.object({ name: z.string(), role: z.string() })),
  updated: z.array(z.object({ name: z.string(), role: z.string() })),
  gone: z.array(z.object({ name: z.string(), role: z.string() })),
  unchanged: z.number().int(),
});
export type RosterSyncResult = z.infer<typeof rosterSyncResultSchema>;
