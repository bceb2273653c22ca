CREATE TABLE `constraint_sets` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`user_id` integer NOT NULL,
	`name` text NOT NULL,
	`filter` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `constraint_sets_user_name_idx` ON `constraint_sets` (`user_id`,`name`);--> statement-breakpoint
ALTER TABLE `releases` ADD `version` text DEFAULT '1' NOT NULL;--> statement-breakpoint
ALTER TABLE `releases` ADD `checksum_rule` text DEFAULT 'thawline-canonical-1' NOT NULL;--> statement-breakpoint
ALTER TABLE `releases` ADD `citation` text DEFAULT '' NOT NULL;--> statement-breakpoint
ALTER TABLE `releases` ADD `previous_release_id` integer;--> statement-breakpoint
ALTER TABLE `releases` ADD `constraint_set_id` integer REFERENCES constraint_sets(id);--> statement-breakpoint
CREATE UNIQUE INDEX `releases_name_version_idx` ON `releases` (`name`,`version`);--> statement-breakpoint
CREATE INDEX `release_items_det_idx` ON `release_items` (`determination_id`);