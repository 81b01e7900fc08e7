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
