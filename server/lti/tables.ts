/**
 * The tables of the learning-platform link (LTI 1.3): the platforms an admin
 * registered, Loadline's own signing keys, the launch state, who and what a
 * platform's ids stand for here, and the grades waiting to go back.
 * drizzle-kit reads this file beside server/db/schema.ts.
 */
import { sql } from 'drizzle-orm';
import { boolean, index, integer, jsonb, pgTable, primaryKey, serial, text, timestamp, uniqueIndex, varchar } from 'drizzle-orm/pg-core';
import { assignments, attempts, classes, users } from '../db/schema.ts';

const createdAt = timestamp('created_at', { withTimezone: true }).notNull().defaultNow();

/** Loadline's RSA key pairs. One is current (retired_at null); a retired one stays published until its tokens have expired. */
export const ltiKeys = pgTable(
  'lti_keys',
  {
    kid: varchar('kid', { length: 64 }).primaryKey(),
    publicJwk: jsonb('public_jwk').notNull(),
    privateJwk: jsonb('private_jwk').notNull(),
    createdAt,
    retiredAt: timestamp('retired_at', { withTimezone: true }),
  },
  (t) => [uniqueIndex('lti_keys_one_current').on(sql`(${t.retiredAt} is null)`).where(sql`${t.retiredAt} is null`)],
);

/** A learning platform an admin registered: its issuer, the client id it gave Loadline, and its endpoints. */
export const ltiPlatforms = pgTable(
  'lti_platforms',
  {
    id: serial('id').primaryKey(),
    name: varchar('name', { length: 120 }).notNull(),
    issuer: varchar('issuer', { length: 500 }).notNull(),
    clientId: varchar('client_id', { length: 255 }).notNull(),
    /** The platform's OIDC authorisation endpoint (where the login initiation sends the browser). */
    authUrl: varchar('auth_url', { length: 2000 }).notNull(),
    /** Its OAuth 2 token endpoint (client-credentials grant for grades and rosters). */
    tokenUrl: varchar('token_url', { length: 2000 }).notNull(),
    /** Its public key set. */
    jwksUrl: varchar('jwks_url', { length: 2000 }).notNull(),
    createdAt,
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('lti_platforms_issuer_client').on(t.issuer, t.clientId)],
);

export const ltiDeployments = pgTable(
  'lti_deployments',
  {
    platformId: integer('platform_id')
      .notNull()
      .references(() => ltiPlatforms.id, { onDelete: 'cascade' }),
    deploymentId: varchar('deployment_id', { length: 255 }).notNull(),
    createdAt,
  },
  (t) => [primaryKey({ columns: [t.platformId, t.deploymentId] })],
);

/** The OIDC login state, kept on the server (a framed launch may have no cookies): only its hash is stored; used once. */
export const ltiLoginStates = pgTable(
  'lti_login_states',
  {
    stateHash: varchar('state_hash', { length: 64 }).primaryKey(),
    nonce: varchar('nonce', { length: 64 }).notNull(),
    platformId: integer('platform_id')
      .notNull()
      .references(() => ltiPlatforms.id, { onDelete: 'cascade' }),
    targetLinkUri: text('target_link_uri').notNull(),
    createdAt,
    expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
    usedAt: timestamp('used_at', { withTimezone: true }),
  },
  (t) => [index('lti_login_states_expires').on(t.expiresAt)],
);

/** A platform's user (issuer + subject) and the Loadline account they sign in as. Never matched by e-mail. */
export const ltiAccounts = pgTable(
  'lti_accounts',
  {
    platformId: integer('platform_id')
      .notNull()
      .references(() => ltiPlatforms.id, { onDelete: 'cascade' }),
    subject: varchar('subject', { length: 255 }).notNull(),
    userId: integer('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    createdAt,
    lastLaunchAt: timestamp('last_launch_at', { withTimezone: true }),
  },
  (t) => [primaryKey({ columns: [t.platformId, t.subject] }), index('lti_accounts_user').on(t.userId)],
);

/** A platform's course (context) and the Loadline class it is. */
export const ltiContexts = pgTable(
  'lti_contexts',
  {
    platformId: integer('platform_id')
      .notNull()
      .references(() => ltiPlatforms.id, { onDelete: 'cascade' }),
    contextId: varchar('context_id', { length: 255 }).notNull(),
    classId: integer('class_id')
      .notNull()
      .references(() => classes.id, { onDelete: 'cascade' }),
    deploymentId: varchar('deployment_id', { length: 255 }).notNull(),
    title: varchar('title', { length: 255 }).notNull().default(''),
    /** Names and Role Provisioning Services: the context's membership address, when the platform offers it. */
    membershipsUrl: text('memberships_url'),
    createdAt,
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.platformId, t.contextId] }), uniqueIndex('lti_contexts_class').on(t.classId)],
);

/** An assignment placed from a platform by deep linking: launches naming it must come from that platform. */
export const ltiPlacements = pgTable('lti_placements', {
  assignmentId: integer('assignment_id')
    .primaryKey()
    .references(() => assignments.id, { onDelete: 'cascade' }),
  platformId: integer('platform_id')
    .notNull()
    .references(() => ltiPlatforms.id, { onDelete: 'cascade' }),
  contextId: varchar('context_id', { length: 255 }).notNull(),
  createdAt,
});

/** A platform's resource link and the assignment it opens, with the line item its grades go to. */
export const ltiResourceLinks = pgTable(
  'lti_resource_links',
  {
    platformId: integer('platform_id')
      .notNull()
      .references(() => ltiPlatforms.id, { onDelete: 'cascade' }),
    resourceLinkId: varchar('resource_link_id', { length: 255 }).notNull(),
    assignmentId: integer('assignment_id')
      .notNull()
      .references(() => assignments.id, { onDelete: 'cascade' }),
    /** Assignment and Grade Services: the line item of this link and the scopes the platform granted, as the latest launch said. */
    lineitemUrl: text('lineitem_url'),
    lineitemsUrl: text('lineitems_url'),
    agsScopes: jsonb('ags_scopes').$type<string[]>().notNull().default([]),
    createdAt,
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.platformId, t.resourceLinkId] }), index('lti_resource_links_assignment').on(t.assignmentId)],
);

/** A deep-linking request waiting for the instructor's choice. */
export const ltiDeepLinkRequests = pgTable('lti_deep_link_requests', {
  id: varchar('id', { length: 64 }).primaryKey(),
  userId: integer('user_id')
    .notNull()
    .references(() => users.id, { onDelete: 'cascade' }),
  platformId: integer('platform_id')
    .notNull()
    .references(() => ltiPlatforms.id, { onDelete: 'cascade' }),
  deploymentId: varchar('deployment_id', { length: 255 }).notNull(),
  contextId: varchar('context_id', { length: 255 }).notNull(),
  classId: integer('class_id')
    .notNull()
    .references(() => classes.id, { onDelete: 'cascade' }),
  returnUrl: text('return_url').notNull(),
  /** The platform's opaque `data`, returned as it came. */
  data: text('data'),
  /** Whether the platform takes a line item with the link. */
  acceptsLineItem: boolean('accepts_line_item').notNull().default(true),
  createdAt,
  expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
  usedAt: timestamp('used_at', { withTimezone: true }),
});

/** One-time tokens that hand a verified launch to a browser session (also inside a frame). Only the hash is stored. */
export const ltiHandoffs = pgTable('lti_handoffs', {
  tokenHash: varchar('token_hash', { length: 64 }).primaryKey(),
  userId: integer('user_id')
    .notNull()
    .references(() => users.id, { onDelete: 'cascade' }),
  target: text('target').notNull(),
  createdAt,
  expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
  usedAt: timestamp('used_at', { withTimezone: true }),
});

/**
 * Scores waiting to reach a platform's gradebook: written with the graded
 * attempt's link, sent by a worker with retries and back-off; a platform that
 * is away loses nothing.
 */
export const ltiScoreOutbox = pgTable(
  'lti_score_outbox',
  {
    id: serial('id').primaryKey(),
    attemptId: integer('attempt_id')
      .notNull()
      .references(() => attempts.id, { onDelete: 'cascade' }),
    platformId: integer('platform_id')
      .notNull()
      .references(() => ltiPlatforms.id, { onDelete: 'cascade' }),
    lineitemUrl: text('lineitem_url').notNull(),
    /** The score as the Score service takes it (userId, scoreGiven, …). */
    payload: jsonb('payload').notNull(),
    /** pending (to send, maybe after a failure), sent, or failed (given up; an instructor can resend). */
    status: varchar('status', { length: 16 }).notNull().default('pending'),
    tries: integer('tries').notNull().default(0),
    nextTryAt: timestamp('next_try_at', { withTimezone: true }).notNull().defaultNow(),
    /** A worker that took the row holds it until then, so two processes never send it at once. */
    lockedUntil: timestamp('locked_until', { withTimezone: true }),
    lastError: text('last_error'),
    createdAt,
    sentAt: timestamp('sent_at', { withTimezone: true }),
  },
  (t) => [uniqueIndex('lti_score_outbox_attempt_lineitem').on(t.attemptId, t.lineitemUrl), index('lti_score_outbox_due').on(t.status, t.nextTryAt)],
);

/** Who the platform's roster says is in a class, kept by the roster sync; `gone` once the platform no longer lists them. */
export const ltiMemberships = pgTable(
  'lti_memberships',
  {
    classId: integer('class_id')
      .notNull()
      .references(() => classes.id, { onDelete: 'cascade' }),
    userId: integer('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    role: varchar('role', { length: 16 }).notNull(),
    status: varchar('status', { length: 16 }).notNull().default('active'),
    syncedAt: timestamp('synced_at', { withTimezone: true }).notNull().defaultNow(),
    goneAt: timestamp('gone_at', { withTimezone: true }),
  },
  (t) => [primaryKey({ columns: [t.classId, t.userId] })],
);

/** Each roster sync of a class, for the class page. */
export const ltiRosterSyncs = pgTable('lti_roster_syncs', {
  id: serial('id').primaryKey(),
  classId: integer('class_id')
    .notNull()
    .references(() => classes.id, { onDelete: 'cascade' }),
  syncedBy: integer('synced_by').references(() => users.id, { onDelete: 'set null' }),
  added: integer('added').notNull(),
  updated: integer('updated').notNull(),
  gone: integer('gone').notNull(),
  createdAt,
});
