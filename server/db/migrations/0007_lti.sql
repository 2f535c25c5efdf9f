CREATE TABLE "lti_accounts" (
	"platform_id" integer NOT NULL,
	"subject" varchar(255) NOT NULL,
	"user_id" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"last_launch_at" timestamp with time zone,
	CONSTRAINT "lti_accounts_platform_id_subject_pk" PRIMARY KEY("platform_id","subject")
);
--> statement-breakpoint
CREATE TABLE "lti_contexts" (
	"platform_id" integer NOT NULL,
	"context_id" varchar(255) NOT NULL,
	"class_id" integer NOT NULL,
	"deployment_id" varchar(255) NOT NULL,
	"title" varchar(255) DEFAULT '' NOT NULL,
	"memberships_url" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "lti_contexts_platform_id_context_id_pk" PRIMARY KEY("platform_id","context_id")
);
--> statement-breakpoint
CREATE TABLE "lti_deep_link_requests" (
	"id" varchar(64) PRIMARY KEY NOT NULL,
	"user_id" integer NOT NULL,
	"platform_id" integer NOT NULL,
	"deployment_id" varchar(255) NOT NULL,
	"context_id" varchar(255) NOT NULL,
	"class_id" integer NOT NULL,
	"return_url" text NOT NULL,
	"data" text,
	"accepts_line_item" boolean DEFAULT true NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"expires_at" timestamp with time zone NOT NULL,
	"used_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "lti_deployments" (
	"platform_id" integer NOT NULL,
	"deployment_id" varchar(255) NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "lti_deployments_platform_id_deployment_id_pk" PRIMARY KEY("platform_id","deployment_id")
);
--> statement-breakpoint
CREATE TABLE "lti_handoffs" (
	"token_hash" varchar(64) PRIMARY KEY NOT NULL,
	"user_id" integer NOT NULL,
	"target" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"expires_at" timestamp with time zone NOT NULL,
	"used_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "lti_keys" (
	"kid" varchar(64) PRIMARY KEY NOT NULL,
	"public_jwk" jsonb NOT NULL,
	"private_jwk" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"retired_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "lti_login_states" (
	"state_hash" varchar(64) PRIMARY KEY NOT NULL,
	"nonce" varchar(64) NOT NULL,
	"platform_id" integer NOT NULL,
	"target_link_uri" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"expires_at" timestamp with time zone NOT NULL,
	"used_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "lti_memberships" (
	"class_id" integer NOT NULL,
	"user_id" integer NOT NULL,
	"role" varchar(16) NOT NULL,
	"status" varchar(16) DEFAULT 'active' NOT NULL,
	"synced_at" timestamp with time zone DEFAULT now() NOT NULL,
	"gone_at" timestamp with time zone,
	CONSTRAINT "lti_memberships_class_id_user_id_pk" PRIMARY KEY("class_id","user_id")
);
--> statement-breakpoint
CREATE TABLE "lti_placements" (
	"assignment_id" integer PRIMARY KEY NOT NULL,
	"platform_id" integer NOT NULL,
	"context_id" varchar(255) NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "lti_platforms" (
	"id" serial PRIMARY KEY NOT NULL,
	"name" varchar(120) NOT NULL,
	"issuer" varchar(500) NOT NULL,
	"client_id" varchar(255) NOT NULL,
	"auth_url" varchar(2000) NOT NULL,
	"token_url" varchar(2000) NOT NULL,
	"jwks_url" varchar(2000) NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "lti_resource_links" (
	"platform_id" integer NOT NULL,
	"resource_link_id" varchar(255) NOT NULL,
	"assignment_id" integer NOT NULL,
	"lineitem_url" text,
	"lineitems_url" text,
	"ags_scopes" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "lti_resource_links_platform_id_resource_link_id_pk" PRIMARY KEY("platform_id","resource_link_id")
);
--> statement-breakpoint
CREATE TABLE "lti_roster_syncs" (
	"id" serial PRIMARY KEY NOT NULL,
	"class_id" integer NOT NULL,
	"synced_by" integer,
	"added" integer NOT NULL,
	"updated" integer NOT NULL,
	"gone" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "lti_score_outbox" (
	"id" serial PRIMARY KEY NOT NULL,
	"attempt_id" integer NOT NULL,
	"platform_id" integer NOT NULL,
	"lineitem_url" text NOT NULL,
	"payload" jsonb NOT NULL,
	"status" varchar(16) DEFAULT 'pending' NOT NULL,
	"tries" integer DEFAULT 0 NOT NULL,
	"next_try_at" timestamp with time zone DEFAULT now() NOT NULL,
	"locked_until" timestamp with time zone,
	"last_error" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"sent_at" timestamp with time zone
);
--> statement-breakpoint
ALTER TABLE "lti_accounts" ADD CONSTRAINT "lti_accounts_platform_id_lti_platforms_id_fk" FOREIGN KEY ("platform_id") REFERENCES "public"."lti_platforms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_accounts" ADD CONSTRAINT "lti_accounts_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_contexts" ADD CONSTRAINT "lti_contexts_platform_id_lti_platforms_id_fk" FOREIGN KEY ("platform_id") REFERENCES "public"."lti_platforms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_contexts" ADD CONSTRAINT "lti_contexts_class_id_classes_id_fk" FOREIGN KEY ("class_id") REFERENCES "public"."classes"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_deep_link_requests" ADD CONSTRAINT "lti_deep_link_requests_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_deep_link_requests" ADD CONSTRAINT "lti_deep_link_requests_platform_id_lti_platforms_id_fk" FOREIGN KEY ("platform_id") REFERENCES "public"."lti_platforms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_deep_link_requests" ADD CONSTRAINT "lti_deep_link_requests_class_id_classes_id_fk" FOREIGN KEY ("class_id") REFERENCES "public"."classes"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_deployments" ADD CONSTRAINT "lti_deployments_platform_id_lti_platforms_id_fk" FOREIGN KEY ("platform_id") REFERENCES "public"."lti_platforms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_handoffs" ADD CONSTRAINT "lti_handoffs_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_login_states" ADD CONSTRAINT "lti_login_states_platform_id_lti_platforms_id_fk" FOREIGN KEY ("platform_id") REFERENCES "public"."lti_platforms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_memberships" ADD CONSTRAINT "lti_memberships_class_id_classes_id_fk" FOREIGN KEY ("class_id") REFERENCES "public"."classes"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_memberships" ADD CONSTRAINT "lti_memberships_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_placements" ADD CONSTRAINT "lti_placements_assignment_id_assignments_id_fk" FOREIGN KEY ("assignment_id") REFERENCES "public"."assignments"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_placements" ADD CONSTRAINT "lti_placements_platform_id_lti_platforms_id_fk" FOREIGN KEY ("platform_id") REFERENCES "public"."lti_platforms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_resource_links" ADD CONSTRAINT "lti_resource_links_platform_id_lti_platforms_id_fk" FOREIGN KEY ("platform_id") REFERENCES "public"."lti_platforms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_resource_links" ADD CONSTRAINT "lti_resource_links_assignment_id_assignments_id_fk" FOREIGN KEY ("assignment_id") REFERENCES "public"."assignments"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_roster_syncs" ADD CONSTRAINT "lti_roster_syncs_class_id_classes_id_fk" FOREIGN KEY ("class_id") REFERENCES "public"."classes"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_roster_syncs" ADD CONSTRAINT "lti_roster_syncs_synced_by_users_id_fk" FOREIGN KEY ("synced_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_score_outbox" ADD CONSTRAINT "lti_score_outbox_attempt_id_attempts_id_fk" FOREIGN KEY ("attempt_id") REFERENCES "public"."attempts"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lti_score_outbox" ADD CONSTRAINT "lti_score_outbox_platform_id_lti_platforms_id_fk" FOREIGN KEY ("platform_id") REFERENCES "public"."lti_platforms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "lti_accounts_user" ON "lti_accounts" USING btree ("user_id");--> statement-breakpoint
CREATE UNIQUE INDEX "lti_contexts_class" ON "lti_contexts" USING btree ("class_id");--> statement-breakpoint
CREATE UNIQUE INDEX "lti_keys_one_current" ON "lti_keys" USING btree (("retired_at" is null)) WHERE "lti_keys"."retired_at" is null;--> statement-breakpoint
CREATE INDEX "lti_login_states_expires" ON "lti_login_states" USING btree ("expires_at");--> statement-breakpoint
CREATE UNIQUE INDEX "lti_platforms_issuer_client" ON "lti_platforms" USING btree ("issuer","client_id");--> statement-breakpoint
CREATE INDEX "lti_resource_links_assignment" ON "lti_resource_links" USING btree ("assignment_id");--> statement-breakpoint
CREATE UNIQUE INDEX "lti_score_outbox_attempt_lineitem" ON "lti_score_outbox" USING btree ("attempt_id","lineitem_url");--> statement-breakpoint
CREATE INDEX "lti_score_outbox_due" ON "lti_score_outbox" USING btree ("status","next_try_at");