CREATE TABLE `client_minutes` (
	`credential_id` text NOT NULL,
	`client_hash` text NOT NULL,
	`minute` integer NOT NULL,
	`requests` integer DEFAULT 0 NOT NULL,
	PRIMARY KEY(`credential_id`, `client_hash`, `minute`),
	FOREIGN KEY (`credential_id`) REFERENCES `credentials`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `client_minutes_minute` ON `client_minutes` (`minute`);--> statement-breakpoint
CREATE TABLE `key_origins` (
	`credential_id` text NOT NULL,
	`origin` text NOT NULL,
	PRIMARY KEY(`credential_id`, `origin`),
	FOREIGN KEY (`credential_id`) REFERENCES `credentials`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `key_origins_origin` ON `key_origins` (`origin`);--> statement-breakpoint
ALTER TABLE `credentials` ADD `origins` text;--> statement-breakpoint
ALTER TABLE `credentials` ADD `requests_per_minute` integer;--> statement-breakpoint
ALTER TABLE `credentials` ADD `public_secret` text;--> statement-breakpoint
ALTER TABLE `datasets` ADD `finder_key_id` text;--> statement-breakpoint
ALTER TABLE `datasets` ADD `finder_frame_origins` text;--> statement-breakpoint
ALTER TABLE `datasets` ADD `finder_k` integer;