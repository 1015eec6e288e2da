CREATE TYPE "public"."target_list_status" AS ENUM('draft', 'published');--> statement-breakpoint
CREATE TYPE "public"."target_status" AS ENUM('planned', 'cored', 'result');--> statement-breakpoint
CREATE TABLE "target_lists" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"name" text NOT NULL,
	"source" jsonb NOT NULL,
	"params" jsonb NOT NULL,
	"plan" jsonb,
	"status" "target_list_status" DEFAULT 'draft' NOT NULL,
	"published_hash" text,
	"published_by" integer,
	"published_at" timestamp with time zone,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "targets" (
	"id" serial PRIMARY KEY NOT NULL,
	"list_id" integer NOT NULL,
	"rank" integer NOT NULL,
	"waypoint" text NOT NULL,
	"x" double precision NOT NULL,
	"y" double precision NOT NULL,
	"lon" double precision NOT NULL,
	"lat" double precision NOT NULL,
	"detail" jsonb NOT NULL,
	"status" "target_status" DEFAULT 'planned' NOT NULL,
	"core" jsonb,
	"updated_by" integer,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "target_lists" ADD CONSTRAINT "target_lists_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "target_lists" ADD CONSTRAINT "target_lists_published_by_users_id_fk" FOREIGN KEY ("published_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "target_lists" ADD CONSTRAINT "target_lists_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "targets" ADD CONSTRAINT "targets_list_id_target_lists_id_fk" FOREIGN KEY ("list_id") REFERENCES "public"."target_lists"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "targets" ADD CONSTRAINT "targets_updated_by_users_id_fk" FOREIGN KEY ("updated_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "target_lists_project_idx" ON "target_lists" USING btree ("project_id","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "targets_list_rank_key" ON "targets" USING btree ("list_id","rank");