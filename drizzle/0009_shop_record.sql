CREATE TABLE "shop_record" (
	"shop_id" integer PRIMARY KEY NOT NULL,
	"line" text,
	"computed_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
ALTER TABLE "shop_record" ADD CONSTRAINT "shop_record_shop_id_shop_id_fk" FOREIGN KEY ("shop_id") REFERENCES "public"."shop"("id") ON DELETE cascade ON UPDATE no action;