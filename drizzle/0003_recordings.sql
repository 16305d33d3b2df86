CREATE TYPE "public"."recording_format" AS ENUM('pcm16', 'pcm24', 'float32');--> statement-breakpoint
CREATE TYPE "public"."recording_state" AS ENUM('open', 'finished');--> statement-breakpoint
CREATE TABLE "recordings" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "recordings_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"shop_id" integer NOT NULL,
	"job_id" integer NOT NULL,
	"test_point_id" integer,
	"phase" "capture_phase" NOT NULL,
	"stimulus" "stimulus" NOT NULL,
	"driven_channel" integer,
	"calibration_id" integer,
	"load_ohms" double precision,
	"sample_rate" integer NOT NULL,
	"channels" integer NOT NULL,
	"format" "recording_format" NOT NULL,
	"planned_seconds" double precision,
	"notes" text DEFAULT '' NOT NULL,
	"chunk_count" integer DEFAULT 0 NOT NULL,
	"bytes_received" bigint DEFAULT 0 NOT NULL,
	"state" "recording_state" DEFAULT 'open' NOT NULL,
	"capture_id" integer,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "recordings" ADD CONSTRAINT "recordings_shop_id_shops_id_fk" FOREIGN KEY ("shop_id") REFERENCES "public"."shops"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recordings" ADD CONSTRAINT "recordings_job_id_jobs_id_fk" FOREIGN KEY ("job_id") REFERENCES "public"."jobs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recordings" ADD CONSTRAINT "recordings_test_point_id_test_points_id_fk" FOREIGN KEY ("test_point_id") REFERENCES "public"."test_points"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recordings" ADD CONSTRAINT "recordings_calibration_id_calibration_profiles_id_fk" FOREIGN KEY ("calibration_id") REFERENCES "public"."calibration_profiles"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recordings" ADD CONSTRAINT "recordings_capture_id_captures_id_fk" FOREIGN KEY ("capture_id") REFERENCES "public"."captures"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recordings" ADD CONSTRAINT "recordings_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "recordings_shop_job_idx" ON "recordings" USING btree ("shop_id","job_id","state");