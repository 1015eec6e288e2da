CREATE TYPE "public"."scoring_status" AS ENUM('running', 'published', 'failed', 'cancelled');--> statement-breakpoint
CREATE TABLE "scorings" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"reconstruction_id" integer NOT NULL,
	"weight_set_version_id" integer NOT NULL,
	"target" jsonb NOT NULL,
	"inputs_hash" text NOT NULL,
	"status" "scoring_status" DEFAULT 'running' NOT NULL,
	"job_run_id" uuid,
	"layer_prefix" text,
	"result" jsonb,
	"error" text,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"published_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "weight_set_adoptions" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"version_id" integer NOT NULL,
	"rationale" text DEFAULT '' NOT NULL,
	"adopted_by" integer,
	"adopted_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "weight_set_versions" (
	"id" serial PRIMARY KEY NOT NULL,
	"weight_set_id" integer NOT NULL,
	"version" integer NOT NULL,
	"content" jsonb NOT NULL,
	"content_hash" text NOT NULL,
	"note" text DEFAULT '' NOT NULL,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "weight_sets" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"name" text NOT NULL,
	"description" text DEFAULT '' NOT NULL,
	"current_version" integer DEFAULT 1 NOT NULL,
	"forked_from_version_id" integer,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "scorings" ADD CONSTRAINT "scorings_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scorings" ADD CONSTRAINT "scorings_reconstruction_id_reconstructions_id_fk" FOREIGN KEY ("reconstruction_id") REFERENCES "public"."reconstructions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scorings" ADD CONSTRAINT "scorings_weight_set_version_id_weight_set_versions_id_fk" FOREIGN KEY ("weight_set_version_id") REFERENCES "public"."weight_set_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scorings" ADD CONSTRAINT "scorings_job_run_id_job_runs_id_fk" FOREIGN KEY ("job_run_id") REFERENCES "public"."job_runs"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scorings" ADD CONSTRAINT "scorings_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weight_set_adoptions" ADD CONSTRAINT "weight_set_adoptions_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weight_set_adoptions" ADD CONSTRAINT "weight_set_adoptions_version_id_weight_set_versions_id_fk" FOREIGN KEY ("version_id") REFERENCES "public"."weight_set_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weight_set_adoptions" ADD CONSTRAINT "weight_set_adoptions_adopted_by_users_id_fk" FOREIGN KEY ("adopted_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weight_set_versions" ADD CONSTRAINT "weight_set_versions_weight_set_id_weight_sets_id_fk" FOREIGN KEY ("weight_set_id") REFERENCES "public"."weight_sets"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weight_set_versions" ADD CONSTRAINT "weight_set_versions_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weight_sets" ADD CONSTRAINT "weight_sets_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weight_sets" ADD CONSTRAINT "weight_sets_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "scorings_inputs_key" ON "scorings" USING btree ("project_id","inputs_hash");--> statement-breakpoint
CREATE INDEX "scorings_project_idx" ON "scorings" USING btree ("project_id","created_at");--> statement-breakpoint
CREATE INDEX "weight_set_adoptions_project_idx" ON "weight_set_adoptions" USING btree ("project_id","adopted_at");--> statement-breakpoint
CREATE UNIQUE INDEX "weight_set_versions_key" ON "weight_set_versions" USING btree ("weight_set_id","version");--> statement-breakpoint
CREATE INDEX "weight_sets_project_idx" ON "weight_sets" USING btree ("project_id");