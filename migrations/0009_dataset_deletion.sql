ALTER TABLE `datasets` ADD `deleted_at` text;--> statement-breakpoint
ALTER TABLE `datasets` ADD `blobs_collected_at` text;