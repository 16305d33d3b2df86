CREATE TABLE "payment_standin_checkouts" (
	"id" text PRIMARY KEY NOT NULL,
	"idempotency_key" text,
	"body" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX "payment_standin_checkouts_idempotency_key_idx" ON "payment_standin_checkouts" USING btree ("idempotency_key");