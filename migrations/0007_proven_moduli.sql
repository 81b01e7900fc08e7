CREATE TABLE `modulus_registrations` (
	`credential_id` text NOT NULL,
	`hour` text NOT NULL,
	`checked` integer DEFAULT 0 NOT NULL,
	`refused` integer DEFAULT 0 NOT NULL,
	PRIMARY KEY(`credential_id`, `hour`),
	FOREIGN KEY (`credential_id`) REFERENCES `credentials`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `proven_moduli` (
	`modulus_sha256` text PRIMARY KEY NOT NULL,
	`modulus_bits` integer NOT NULL,
	`registered_at` integer NOT NULL,
	`expires_at` integer NOT NULL
);
