ALTER TABLE "spec_sheets" ADD COLUMN "inputs" jsonb DEFAULT '[]'::jsonb NOT NULL;--> statement-breakpoint
ALTER TABLE "units" ADD COLUMN "inputs" jsonb DEFAULT '[]'::jsonb NOT NULL;--> statement-breakpoint
ALTER TABLE "captures" ADD COLUMN "selected_input" text;--> statement-breakpoint
ALTER TABLE "captures" ADD COLUMN "driven_input" text;--> statement-breakpoint
ALTER TABLE "recordings" ADD COLUMN "selected_input" text;--> statement-breakpoint
ALTER TABLE "recordings" ADD COLUMN "driven_input" text;