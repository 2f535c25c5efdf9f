/**
 * The claims and vocabularies of LTI 1.3 and LTI Advantage that Loadline
 * reads and writes, with the checks a launch's claims must pass.
 */
import { z } from 'zod';

export const LTI_VERSION = '1.3.0';

const ims = 'https://purl.imsglobal.org/spec/lti/claim/';
export const CLAIM = {
  messageType: `${ims}message_type`,
  version: `${ims}version`,
  deploymentId: `${ims}deployment_id`,
  targetLinkUri: `${ims}target_link_uri`,
  resourceLink: `${ims}resource_link`,
  roles: `${ims}roles`,
  context: `${ims}context`,
  custom: `${ims}custom`,
  launchPresentation: `${ims}launch_presentation`,
  deepLinkingSettings: 'https://purl.imsglobal.org/spec/lti-dl/claim/deep_linking_settings',
  deepLinkingData: 'https://purl.imsglobal.org/spec/lti-dl/claim/data',
  contentItems: 'https://purl.imsglobal.org/spec/lti-dl/claim/content_items',
  ags: 'https://purl.imsglobal.org/spec/lti-ags/claim/endpoint',
  nrps: 'https://purl.imsglobal.org/spec/lti-nrps/claim/namesroleservice',
} as const;

export const MESSAGE = {
  resourceLink: 'LtiResourceLinkRequest',
  deepLinkingRequest: 'LtiDeepLinkingRequest',
  deepLinkingResponse: 'LtiDeepLinkingResponse',
} as const;

export const SCOPE = {
  lineItem: 'https://purl.imsglobal.org/spec/lti-ags/scope/lineitem',
  lineItemReadOnly: 'https://purl.imsglobal.org/spec/lti-ags/scope/lineitem.readonly',
  score: 'https://purl.imsglobal.org/spec/lti-ags/scope/score',
  resultReadOnly: 'https://purl.imsglobal.org/spec/lti-ags/scope/result.readonly',
  memberships: 'https://purl.imsglobal.org/spec/lti-nrps/scope/contextmembership.readonly',
} as const;

export const MEDIA = {
  score: 'application/vnd.ims.lis.v1.score+json',
  lineItem: 'application/vnd.ims.lis.v2.lineitem+json',
  memberships: 'application/vnd.ims.lti-nrps.v2.membershipcontainer+json',
} as const;

/** The custom parameter a deep-linked resource link carries: the assignment it was made for. */
export const ASSIGNMENT_CUSTOM = 'loadline_assignment_id';

const membership = 'http://purl.imsglobal.org/vocab/lis/v2/membership';

/**
 * The Loadline role a launch's roles claim maps to: an instructor or teaching
 * assistant of the context teaches; a learner studies; anything else (a
 * mentor, an observer, an administrator of the institution with no course
 * role) has no place. LTI Core 1.3 §5.3.7 (roles claim) and Appendix A.2.3
 * (context roles; simple names may stand for the full URIs).
 */
export function mappedRole(roles: readonly string[]): 'instructor' | 'student' | null {
  const is = (role: string, name: 'Instructor' | 'Learner') => role === `${membership}#${name}` || role === name || role.startsWith(`${membership}/${name}#`);
  if (roles.some((r) => is(r, 'Instructor') || r === 'TeachingAssistant')) return 'instructor';
  if (roles.some((r) => is(r, 'Learner'))) return 'student';
  return null;
}

const idText = (max: number) => z.string().min(1).max(max);

/** What Loadline reads of a verified id_token; the signature and the registered values are checked before. */
export const launchClaimsSchema = z.object({
  sub: idText(255),
  name: z.string().max(500).optional(),
  given_name: z.string().max(250).optional(),
  family_name: z.string().max(250).optional(),
  email: z.string().max(254).optional(),
  [CLAIM.messageType]: z.enum([MESSAGE.resourceLink, MESSAGE.deepLinkingRequest]),
  [CLAIM.version]: z.literal(LTI_VERSION),
  [CLAIM.deploymentId]: idText(255),
  [CLAIM.targetLinkUri]: z.string().max(2000).optional(),
  [CLAIM.roles]: z.array(z.string().max(500)).max(100),
  [CLAIM.resourceLink]: z.object({ id: idText(255), title: z.string().max(500).optional() }).optional(),
  [CLAIM.context]: z.object({ id: idText(255), title: z.string().max(500).optional(), label: z.string().max(500).optional() }).optional(),
  [CLAIM.custom]: z.record(z.string(), z.unknown()).optional(),
  [CLAIM.launchPresentation]: z.object({ document_target: z.string().optional(), return_url: z.string().optional() }).optional(),
  [CLAIM.ags]: z
    .object({ scope: z.array(z.string()).default([]), lineitems: z.string().max(2000).optional(), lineitem: z.string().max(2000).optional() })
    .optional(),
  [CLAIM.nrps]: z.object({ context_memberships_url: z.string().max(2000) }).optional(),
  [CLAIM.deepLinkingSettings]: z
    .object({
      deep_link_return_url: z.string().max(2000),
      accept_types: z.array(z.string()),
      accept_multiple: z.boolean().optional(),
      accept_lineitem: z.boolean().optional(),
      data: z.string().max(4000).optional(),
    })
    .optional(),
});
export type LaunchClaims = z.infer<typeof launchClaimsSchema>;
