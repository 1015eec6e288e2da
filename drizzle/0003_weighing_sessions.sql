CREATE TYPE "public"."weighing_method" AS ENUM('direct', 'ahp');--> statement-breakpoint
CREATE TYPE "public"."weighing_status" AS ENUM('open', 'closed');--> statement-breakpoint
CREATE TABLE "weighing_comments" (
	"id" serial PRIMARY KEY NOT NULL,
	"session_id" integer NOT NULL,
	"user_id" integer,
	"factor" text,
	"body" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "weighing_events" (
	"session_id" integer NOT NULL,
	"seq" bigint NOT NULL,
	"kind" text NOT NULL,
	"user_id" integer,
	"data" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "weighing_events_session_id_seq_pk" PRIMARY KEY("session_id","seq")
);
--> statement-breakpoint
CREATE TABLE "weighing_presence" (
	"connection_id" text PRIMARY KEY NOT NULL,
	"session_id" integer NOT NULL,
	"user_id" integer NOT NULL,
	"opened_at" timestamp with time zone DEFAULT now() NOT NULL,
	"last_seen_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "weighing_proposals" (
	"id" serial PRIMARY KEY NOT NULL,
	"session_id" integer NOT NULL,
	"user_id" integer NOT NULL,
	"content" jsonb NOT NULL,
	"revision" integer DEFAULT 1 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "weighing_sessions" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"title" text NOT NULL,
	"method" "weighing_method" NOT NULL,
	"ahp_factors" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"base_content" jsonb NOT NULL,
	"base_version_id" integer,
	"status" "weighing_status" DEFAULT 'open' NOT NULL,
	"last_seq" bigint DEFAULT 0 NOT NULL,
	"started_by" integer,
	"started_at" timestamp with time zone DEFAULT now() NOT NULL,
	"closed_by" integer,
	"closed_at" timestamp with time zone,
	"final_content" jsonb,
	"outcome" jsonb
);
--> statement-breakpoint
ALTER TABLE "weighing_comments" ADD CONSTRAINT "weighing_comments_session_id_weighing_sessions_id_fk" FOREIGN KEY ("session_id") REFERENCES "public"."weighing_sessions"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_comments" ADD CONSTRAINT "weighing_comments_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_events" ADD CONSTRAINT "weighing_events_session_id_weighing_sessions_id_fk" FOREIGN KEY ("session_id") REFERENCES "public"."weighing_sessions"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_events" ADD CONSTRAINT "weighing_events_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_presence" ADD CONSTRAINT "weighing_presence_session_id_weighing_sessions_id_fk" FOREIGN KEY ("session_id") REFERENCES "public"."weighing_sessions"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_presence" ADD CONSTRAINT "weighing_presence_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_proposals" ADD CONSTRAINT "weighing_proposals_session_id_weighing_sessions_id_fk" FOREIGN KEY ("session_id") REFERENCES "public"."weighing_sessions"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_proposals" ADD CONSTRAINT "weighing_proposals_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_sessions" ADD CONSTRAINT "weighing_sessions_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_sessions" ADD CONSTRAINT "weighing_sessions_base_version_id_weight_set_versions_id_fk" FOREIGN KEY ("base_version_id") REFERENCES "public"."weight_set_versions"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_sessions" ADD CONSTRAINT "weighing_sessions_started_by_users_id_fk" FOREIGN KEY ("started_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighing_sessions" ADD CONSTRAINT "weighing_sessions_closed_by_users_id_fk" FOREIGN KEY ("closed_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "weighing_comments_session_idx" ON "weighing_comments" USING btree ("session_id","created_at");--> statement-breakpoint
CREATE INDEX "weighing_presence_session_idx" ON "weighing_presence" USING btree ("session_id","user_id");--> statement-breakpoint
CREATE UNIQUE INDEX "weighing_proposals_member_key" ON "weighing_proposals" USING btree ("session_id","user_id");--> statement-breakpoint
CREATE INDEX "weighing_sessions_project_idx" ON "weighing_sessions" USING btree ("project_id","started_at");--> statement-breakpoint
-- Hand-written (not from the schema): a member's role change or removal, by any path, notifies the
-- live hub (app/live.server.ts) when its transaction commits, so open event streams re-check access.
CREATE FUNCTION "lowstand_membership_notify"() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' OR NEW.role IS DISTINCT FROM OLD.role THEN
    PERFORM pg_notify('lowstand_live', json_build_object('t', 'member:' || OLD.project_id || ':' || OLD.user_id)::text);
  END IF;
  RETURN NULL;
END $$;--> statement-breakpoint
CREATE TRIGGER "memberships_live_notify" AFTER UPDATE OR DELETE ON "memberships" FOR EACH ROW EXECUTE FUNCTION "lowstand_membership_notify"();
