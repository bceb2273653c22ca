PRAGMA foreign_keys=OFF;--> statement-breakpoint
CREATE TABLE `__new_model_runs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`user_id` integer NOT NULL,
	`release_id` integer,
	`constraint_filter` text,
	`name` text NOT NULL,
	`ensemble` text,
	`file_name` text,
	`stored_path` text,
	`format` text NOT NULL,
	`status` text DEFAULT 'queued' NOT NULL,
	`parameters` text,
	`time_offset_cal_bp` real,
	`threshold_m` real,
	`tolerance` real,
	`epsilon` real,
	`total_log_likelihood` real,
	`n_constraints` integer,
	`share_agreeing` real,
	`max_implausibility` real,
	`second_implausibility` real,
	`ruled_out` integer,
	`summary` text,
	`job_id` integer,
	`error` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`release_id`) REFERENCES `releases`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`job_id`) REFERENCES `jobs`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
INSERT INTO `__new_model_runs`("id", "user_id", "release_id", "name", "ensemble", "file_name", "format", "status", "total_log_likelihood", "error", "created_at") SELECT "id", "user_id", "release_id", "name", "ensemble", "file_name", "format", CASE "status" WHEN 'uploaded' THEN 'queued' WHEN 'scoring' THEN 'running' ELSE "status" END, "total_log_likelihood", "error", "created_at" FROM `model_runs`;--> statement-breakpoint
DROP TABLE `model_runs`;--> statement-breakpoint
ALTER TABLE `__new_model_runs` RENAME TO `model_runs`;--> statement-breakpoint
PRAGMA foreign_keys=ON;--> statement-breakpoint
CREATE INDEX `model_runs_user_idx` ON `model_runs` (`user_id`);--> statement-breakpoint
CREATE INDEX `model_runs_ensemble_idx` ON `model_runs` (`ensemble`);--> statement-breakpoint
ALTER TABLE `model_run_scores` ADD `implausibility` real;--> statement-breakpoint
ALTER TABLE `model_run_scores` ADD `model_deglaciation_cal_bp` real;