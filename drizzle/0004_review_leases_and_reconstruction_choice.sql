CREATE TABLE `review_leases` (
	`determination_id` integer PRIMARY KEY NOT NULL,
	`reviewer_id` integer NOT NULL,
	`expires_at` integer NOT NULL,
	FOREIGN KEY (`determination_id`) REFERENCES `determinations`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`reviewer_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
ALTER TABLE `reconstructions` ADD `uncertainty_yr` real;--> statement-breakpoint
ALTER TABLE `reconstructions` ADD `used_for_checks` integer DEFAULT false NOT NULL;