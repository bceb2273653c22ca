ALTER TABLE `calibrations` ADD `at_curve_limit` integer DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE `calibrations` ADD `notes` text;