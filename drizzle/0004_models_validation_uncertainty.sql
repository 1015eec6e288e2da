CREATE TYPE "public"."model_status" AS ENUM('running', 'published', 'failed', 'cancelled');--> statement-breakpoint
CREATE TYPE "public"."uncertainty_status" AS ENUM('running', 'published', 'failed', 'cancelled');--> statement-breakpoint
CREATE TABLE "models" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"reconstruction_id" integer NOT NULL,
	"name" text DEFAULT '' NOT NULL,
	"params" jsonb NOT NULL,
	"inputs_hash" text NOT NULL,
	"status" "model_status" DEFAULT 'running' NOT NULL,
	"job_run_id" uuid,
	"layer_prefix" text,
	"card" jsonb,
	"result" jsonb,
	"error" text,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"published_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "uncertainty_runs" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"reconstruction_id" integer NOT NULL,
	"weight_set_version_id" integer NOT NULL,
	"target" jsonb NOT NULL,
	"params" jsonb NOT NULL,
	"inputs_hash" text NOT NULL,
	"status" "uncertainty_status" DEFAULT 'running' NOT NULL,
	"job_run_id" uuid,
	"layer_prefix" text,
	"result" jsonb,
	"error" text,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"published_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "validations" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"subject_kind" text NOT NULL,
	"subject_id" integer NOT NULL,
	"inputs_hash" text NOT NULL,
	"result" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "projects" ADD COLUMN "classification" jsonb DEFAULT '{"kind":"fixed","thresholds":[0.25,0.5,0.75],"labels":["low","medium","high","very high"]}'::jsonb NOT NULL;--> statement-breakpoint
ALTER TABLE "projects" ADD COLUMN "holdout_revealed_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "site_records" ADD COLUMN "held_out" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_reconstruction_id_reconstructions_id_fk" FOREIGN KEY ("reconstruction_id") REFERENCES "public"."reconstructions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_job_run_id_job_runs_id_fk" FOREIGN KEY ("job_run_id") REFERENCES "public"."job_runs"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "uncertainty_runs" ADD CONSTRAINT "uncertainty_runs_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "uncertainty_runs" ADD CONSTRAINT "uncertainty_runs_reconstruction_id_reconstructions_id_fk" FOREIGN KEY ("reconstruction_id") REFERENCES "public"."reconstructions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "uncertainty_runs" ADD CONSTRAINT "uncertainty_runs_weight_set_version_id_weight_set_versions_id_fk" FOREIGN KEY ("weight_set_version_id") REFERENCES "public"."weight_set_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "uncertainty_runs" ADD CONSTRAINT "uncertainty_runs_job_run_id_job_runs_id_fk" FOREIGN KEY ("job_run_id") REFERENCES "public"."job_runs"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "uncertainty_runs" ADD CONSTRAINT "uncertainty_runs_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "validations" ADD CONSTRAINT "validations_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "models_inputs_key" ON "models" USING btree ("project_id","inputs_hash");--> statement-breakpoint
CREATE INDEX "models_project_idx" ON "models" USING btree ("project_id","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "uncertainty_inputs_key" ON "uncertainty_runs" USING btree ("project_id","inputs_hash");--> statement-breakpoint
CREATE UNIQUE INDEX "validations_key" ON "validations" USING btree ("project_id","subject_kind","subject_id","inputs_hash");