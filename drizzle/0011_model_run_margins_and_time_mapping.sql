CREATE TABLE `model_run_margins` (
	`run_id` integer NOT NULL,
	`cal_bp` real NOT NULL,
	`coordinates` text NOT NULL,
	PRIMARY KEY(`run_id`, `cal_bp`),
	FOREIGN KEY (`run_id`) REFERENCES `model_runs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
ALTER TABLE `model_runs` ADD `n_slices` integer;--> statement-breakpoint
ALTER TABLE `model_runs` ADD `time_mapping` text;