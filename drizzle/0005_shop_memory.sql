CREATE TYPE "public"."api_token_scope" AS ENUM('upload_captures', 'read_results');--> statement-breakpoint
CREATE TABLE "api_tokens" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "api_tokens_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"shop_id" integer NOT NULL,
	"user_id" integer NOT NULL,
	"name" text NOT NULL,
	"scope" "api_token_scope" NOT NULL,
	"token_hash" varchar(64) NOT NULL,
	"hint" varchar(16) NOT NULL,
	"expires_at" timestamp with time zone NOT NULL,
	"revoked_at" timestamp with time zone,
	"revoked_by" integer,
	"last_used_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "customers" ADD COLUMN "search_vector" "tsvector" GENERATED ALWAYS AS (setweight(to_tsvector('english'::regconfig, "customers"."name"), 'A') || setweight(to_tsvector('english'::regconfig, "customers"."email" || ' ' || "customers"."phone"), 'B') || setweight(to_tsvector('english'::regconfig, "customers"."notes"), 'C')) STORED NOT NULL;--> statement-breakpoint
ALTER TABLE "units" ADD COLUMN "model_key" text GENERATED ALWAYS AS (regexp_replace(lower("units"."maker"), '[^[:alnum:]]+', '', 'g') || '|' || regexp_replace(lower("units"."model"), '[^[:alnum:]]+', '', 'g')) STORED NOT NULL;--> statement-breakpoint
ALTER TABLE "units" ADD COLUMN "serial_key" text GENERATED ALWAYS AS (regexp_replace(lower("units"."serial"), '[^[:alnum:]]+', '', 'g')) STORED NOT NULL;--> statement-breakpoint
ALTER TABLE "units" ADD COLUMN "search_vector" "tsvector" GENERATED ALWAYS AS (setweight(to_tsvector('english'::regconfig, "units"."maker" || ' ' || "units"."model" || ' ' || "units"."serial"), 'A') || setweight(to_tsvector('english'::regconfig, "units"."notes"), 'C')) STORED NOT NULL;--> statement-breakpoint
ALTER TABLE "job_events" ADD COLUMN "search_vector" "tsvector" GENERATED ALWAYS AS (to_tsvector('english'::regconfig, "job_events"."note")) STORED NOT NULL;--> statement-breakpoint
ALTER TABLE "jobs" ADD COLUMN "search_vector" "tsvector" GENERATED ALWAYS AS (setweight(to_tsvector('english'::regconfig, "jobs"."reported_fault" || ' ' || "jobs"."fault_found"), 'A') || setweight(to_tsvector('english'::regconfig, "jobs"."condition_notes" || ' ' || "jobs"."accessories"), 'C')) STORED NOT NULL;--> statement-breakpoint
ALTER TABLE "api_tokens" ADD CONSTRAINT "api_tokens_shop_id_shops_id_fk" FOREIGN KEY ("shop_id") REFERENCES "public"."shops"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "api_tokens" ADD CONSTRAINT "api_tokens_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "api_tokens" ADD CONSTRAINT "api_tokens_revoked_by_users_id_fk" FOREIGN KEY ("revoked_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "api_tokens_hash_idx" ON "api_tokens" USING btree ("token_hash");--> statement-breakpoint
CREATE INDEX "api_tokens_shop_user_idx" ON "api_tokens" USING btree ("shop_id","user_id");--> statement-breakpoint
CREATE INDEX "customers_search_idx" ON "customers" USING gin ("search_vector") WITH (fastupdate=false);--> statement-breakpoint
CREATE INDEX "units_model_key_idx" ON "units" USING btree ("shop_id","model_key");--> statement-breakpoint
CREATE INDEX "units_serial_key_idx" ON "units" USING btree ("shop_id","serial_key" text_pattern_ops);--> statement-breakpoint
CREATE INDEX "units_search_idx" ON "units" USING gin ("search_vector") WITH (fastupdate=false);--> statement-breakpoint
CREATE INDEX "job_events_search_idx" ON "job_events" USING gin ("search_vector") WITH (fastupdate=false);--> statement-breakpoint
CREATE INDEX "jobs_unit_idx" ON "jobs" USING btree ("unit_id");--> statement-breakpoint
CREATE INDEX "jobs_search_idx" ON "jobs" USING gin ("search_vector") WITH (fastupdate=false);