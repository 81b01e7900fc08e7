CREATE TABLE `key_months` (
	`credential_id` text NOT NULL,
	`month` text NOT NULL,
	`queries` integer DEFAULT 0 NOT NULL,
	PRIMARY KEY(`credential_id`, `month`),
	FOREIGN KEY (`credential_id`) REFERENCES `credentials`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `rejections_daily` (
	`tenant_id` text NOT NULL,
	`credential_id` text NOT NULL,
	`dataset_slug` text NOT NULL,
	`day` text NOT NULL,
	`reason` text NOT NULL,
	`queries` integer DEFAULT 0 NOT NULL,
	PRIMARY KEY(`credential_id`, `dataset_slug`, `day`, `reason`),
	FOREIGN KEY (`tenant_id`) REFERENCES `tenants`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`credential_id`) REFERENCES `credentials`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
ALTER TABLE `credentials` ADD `dataset_scope` text;--> statement-breakpoint
ALTER TABLE `credentials` ADD `monthly_quota` integer;