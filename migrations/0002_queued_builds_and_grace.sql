ALTER TABLE `versions` ADD `layout` text;--> statement-breakpoint
ALTER TABLE `versions` ADD `progress_stage` text;--> statement-breakpoint
ALTER TABLE `versions` ADD `progress_percent` integer;--> statement-breakpoint
ALTER TABLE `versions` ADD `progress_at` text;--> statement-breakpoint
ALTER TABLE `versions` ADD `build_attempts` integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE `versions` ADD `summary` text;--> statement-breakpoint
ALTER TABLE `versions` ADD `served_until` text;--> statement-breakpoint
ALTER TABLE `versions` ADD `retired_at` text;