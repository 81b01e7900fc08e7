CREATE TABLE `tariffs` (
	`tenant_id` text NOT NULL,
	`from_month` text NOT NULL,
	`query_micros` integer NOT NULL,
	`gb_micros` integer NOT NULL,
	`million_multiplications_micros` integer NOT NULL,
	`monthly_base_micros` integer NOT NULL,
	`set_at` text DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')) NOT NULL,
	`set_by` text NOT NULL,
	PRIMARY KEY(`tenant_id`, `from_month`),
	FOREIGN KEY (`tenant_id`) REFERENCES `tenants`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
ALTER TABLE `versions` ADD `layout` text;--> statement-breakpoint
ALTER TABLE `versions` ADD `progress_stage` text;--> statement-breakpoint
ALTER TABLE `versions` ADD `progress_percent` integer;--> statement-breakpoint
ALTER TABLE `versions` ADD `progress_at` text;--> statement-breakpoint
ALTER TABLE `versions` ADD `build_attempts` integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE `versions` ADD `summary` text;--> statement-breakpoint
ALTER TABLE `versions` ADD `served_until` text;--> statement-breakpoint
ALTER TABLE `versions` ADD `retired_at` text;