CREATE TYPE "public"."job_state" AS ENUM('queued', 'running', 'succeeded', 'failed', 'cancelled');--> statement-breakpoint
CREATE TYPE "public"."reconstruction_status" AS ENUM('running', 'published', 'failed', 'cancelled');--> statement-breakpoint
CREATE TYPE "public"."site_visibility" AS ENUM('normal', 'restricted', 'withheld');--> statement-breakpoint
CREATE TABLE "datasets" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"kind" text NOT NULL,
	"name" text NOT NULL,
	"format" text NOT NULL,
	"original_key" text NOT NULL,
	"original_name" text NOT NULL,
	"size_bytes" bigint NOT NULL,
	"sha256" text NOT NULL,
	"derived_key" text NOT NULL,
	"derived_format" text NOT NULL,
	"crs_epsg" integer NOT NULL,
	"vertical" jsonb,
	"extent" double precision[],
	"count" integer NOT NULL,
	"summary" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"warnings" text[] DEFAULT '{}'::text[] NOT NULL,
	"uploaded_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "job_runs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"project_id" integer,
	"kind" text NOT NULL,
	"state" "job_state" DEFAULT 'queued' NOT NULL,
	"step" text DEFAULT '' NOT NULL,
	"fraction" double precision DEFAULT 0 NOT NULL,
	"message" text DEFAULT '' NOT NULL,
	"payload" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"result" jsonb,
	"queue_job_id" text,
	"attempt" integer DEFAULT 0 NOT NULL,
	"heartbeat_at" timestamp with time zone,
	"cancel_requested" boolean DEFAULT false NOT NULL,
	"started_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "reconstructions" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"name" text DEFAULT '' NOT NULL,
	"inputs_hash" text NOT NULL,
	"params" jsonb NOT NULL,
	"engine_version" text NOT NULL,
	"status" "reconstruction_status" DEFAULT 'running' NOT NULL,
	"job_run_id" uuid,
	"layer_prefix" text,
	"manifest" jsonb,
	"error" text,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"published_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "sea_level_curves" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"name" text NOT NULL,
	"source" text DEFAULT '' NOT NULL,
	"points" jsonb NOT NULL,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "site_records" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"dataset_id" integer NOT NULL,
	"row_number" integer NOT NULL,
	"label" text DEFAULT '' NOT NULL,
	"x" double precision NOT NULL,
	"y" double precision NOT NULL,
	"precision_m" double precision,
	"site_kind" text DEFAULT '' NOT NULL,
	"context" text NOT NULL,
	"discovery_method" text DEFAULT '' NOT NULL,
	"cal_bp_from" double precision,
	"cal_bp_to" double precision,
	"confidence" text DEFAULT '' NOT NULL,
	"community" text,
	"visibility" "site_visibility" DEFAULT 'normal' NOT NULL,
	"attributes" jsonb DEFAULT '{}'::jsonb NOT NULL
);
--> statement-breakpoint
ALTER TABLE "memberships" ADD COLUMN "custodian_for" text;--> statement-breakpoint
ALTER TABLE "projects" ADD COLUMN "site_generalisation_m" integer DEFAULT 1000 NOT NULL;--> statement-breakpoint
ALTER TABLE "projects" ADD COLUMN "site_min_count" integer DEFAULT 3 NOT NULL;--> statement-breakpoint
ALTER TABLE "datasets" ADD CONSTRAINT "datasets_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "datasets" ADD CONSTRAINT "datasets_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "job_runs" ADD CONSTRAINT "job_runs_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "job_runs" ADD CONSTRAINT "job_runs_started_by_users_id_fk" FOREIGN KEY ("started_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reconstructions" ADD CONSTRAINT "reconstructions_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reconstructions" ADD CONSTRAINT "reconstructions_job_run_id_job_runs_id_fk" FOREIGN KEY ("job_run_id") REFERENCES "public"."job_runs"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reconstructions" ADD CONSTRAINT "reconstructions_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sea_level_curves" ADD CONSTRAINT "sea_level_curves_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sea_level_curves" ADD CONSTRAINT "sea_level_curves_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "site_records" ADD CONSTRAINT "site_records_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "site_records" ADD CONSTRAINT "site_records_dataset_id_datasets_id_fk" FOREIGN KEY ("dataset_id") REFERENCES "public"."datasets"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "datasets_project_idx" ON "datasets" USING btree ("project_id","kind");--> statement-breakpoint
CREATE INDEX "job_runs_project_idx" ON "job_runs" USING btree ("project_id","created_at");--> statement-breakpoint
CREATE INDEX "job_runs_running_idx" ON "job_runs" USING btree ("state","heartbeat_at");--> statement-breakpoint
CREATE UNIQUE INDEX "reconstructions_inputs_key" ON "reconstructions" USING btree ("project_id","inputs_hash");--> statement-breakpoint
CREATE INDEX "site_records_project_idx" ON "site_records" USING btree ("project_id");