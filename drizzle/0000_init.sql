CREATE TABLE `api_tokens` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`user_id` integer NOT NULL,
	`label` text NOT NULL,
	`token_hash` text NOT NULL,
	`prefix` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`last_used_at` integer,
	`revoked_at` integer,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `api_tokens_token_hash_unique` ON `api_tokens` (`token_hash`);--> statement-breakpoint
CREATE INDEX `api_tokens_user_idx` ON `api_tokens` (`user_id`);--> statement-breakpoint
CREATE TABLE `audit_log` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`actor_id` integer,
	`action` text NOT NULL,
	`entity` text NOT NULL,
	`entity_id` text,
	`before` text,
	`after` text,
	`ip` text,
	FOREIGN KEY (`actor_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `audit_entity_idx` ON `audit_log` (`entity`,`entity_id`);--> statement-breakpoint
CREATE INDEX `audit_at_idx` ON `audit_log` (`at`);--> statement-breakpoint
CREATE TABLE `calibrations` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`determination_id` integer NOT NULL,
	`curve_id` integer,
	`curve_label` text NOT NULL,
	`is_current` integer DEFAULT true NOT NULL,
	`median_cal_bp` real,
	`hpd68` text,
	`hpd95` text,
	`hpd95_from_bp` real,
	`hpd95_to_bp` real,
	`density_start_cal_bp` integer,
	`density` blob,
	`error` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`determination_id`) REFERENCES `determinations`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`curve_id`) REFERENCES `curves`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `cal_det_idx` ON `calibrations` (`determination_id`);--> statement-breakpoint
CREATE INDEX `cal_current_median_idx` ON `calibrations` (`is_current`,`median_cal_bp`);--> statement-breakpoint
CREATE TABLE `check_results` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`determination_id` integer NOT NULL,
	`check` text NOT NULL,
	`severity` text NOT NULL,
	`message` text NOT NULL,
	`details` text,
	`suggested_flag` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`determination_id`) REFERENCES `determinations`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `checks_det_idx` ON `check_results` (`determination_id`);--> statement-breakpoint
CREATE INDEX `checks_severity_idx` ON `check_results` (`severity`);--> statement-breakpoint
CREATE TABLE `curve_points` (
	`curve_id` integer NOT NULL,
	`cal_bp` real NOT NULL,
	`c14_age_yr` real NOT NULL,
	`c14_sigma_yr` real NOT NULL,
	`delta14c_permil` real,
	`delta14c_sigma_permil` real,
	PRIMARY KEY(`curve_id`, `cal_bp`),
	FOREIGN KEY (`curve_id`) REFERENCES `curves`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `curves` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`display_name` text NOT NULL,
	`kind` text NOT NULL,
	`version` text NOT NULL,
	`citation` text NOT NULL,
	`doi` text,
	`cal_min_bp` integer NOT NULL,
	`cal_max_bp` integer NOT NULL,
	`row_count` integer NOT NULL,
	`checksum` text NOT NULL,
	`active` integer DEFAULT true NOT NULL,
	`created_by` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `curves_name_version_idx` ON `curves` (`name`,`version`);--> statement-breakpoint
CREATE TABLE `determinations` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`sample_id` integer NOT NULL,
	`lab_id` integer NOT NULL,
	`lab_code` text NOT NULL,
	`method` text NOT NULL,
	`constraint_kind` text NOT NULL,
	`status` text DEFAULT 'submitted' NOT NULL,
	`version` integer DEFAULT 1 NOT NULL,
	`contributor_id` integer,
	`publication_id` integer,
	`upload_batch_id` integer,
	`grade` integer,
	`c14_age_yr` real,
	`c14_error_yr` real,
	`f14c` real,
	`f14c_error` real,
	`d13c_permil` real,
	`age_normalised` integer DEFAULT true NOT NULL,
	`is_limit` integer DEFAULT false NOT NULL,
	`pretreatment` text,
	`curve_name` text,
	`delta_r_yr` real,
	`delta_r_error_yr` real,
	`delta_r_curve` text,
	`signal` text,
	`mineral` text,
	`de_gy` real,
	`de_error_gy` real,
	`dose_rate_gy_per_ka` real,
	`dose_rate_error_gy_per_ka` real,
	`k_percent` real,
	`u_ppm` real,
	`th_ppm` real,
	`water_content_fraction` real,
	`grain_size_um` real,
	`burial_depth_m` real,
	`density_g_per_cm3` real,
	`conversion_factors` text,
	`measurement_year` integer,
	`aliquots` integer,
	`age_model` text,
	`be10_atoms_per_g` real,
	`be10_error_atoms_per_g` real,
	`notes` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`sample_id`) REFERENCES `samples`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`lab_id`) REFERENCES `labs`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`contributor_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`publication_id`) REFERENCES `publications`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`upload_batch_id`) REFERENCES `upload_batches`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`grade`) REFERENCES `grades`(`value`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `determinations_lab_code_unique` ON `determinations` (`lab_code`);--> statement-breakpoint
CREATE INDEX `det_sample_idx` ON `determinations` (`sample_id`);--> statement-breakpoint
CREATE INDEX `det_lab_idx` ON `determinations` (`lab_id`);--> statement-breakpoint
CREATE INDEX `det_status_idx` ON `determinations` (`status`);--> statement-breakpoint
CREATE INDEX `det_method_idx` ON `determinations` (`method`);--> statement-breakpoint
CREATE INDEX `det_contributor_idx` ON `determinations` (`contributor_id`);--> statement-breakpoint
CREATE INDEX `det_batch_idx` ON `determinations` (`upload_batch_id`);--> statement-breakpoint
CREATE INDEX `det_c14_idx` ON `determinations` (`c14_age_yr`);--> statement-breakpoint
CREATE TABLE `grades` (
	`value` integer PRIMARY KEY NOT NULL,
	`name` text NOT NULL,
	`description` text NOT NULL
);
--> statement-breakpoint
CREATE TABLE `jobs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`kind` text NOT NULL,
	`status` text DEFAULT 'queued' NOT NULL,
	`progress` integer DEFAULT 0 NOT NULL,
	`total` integer DEFAULT 0 NOT NULL,
	`message` text,
	`params` text,
	`created_by` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`finished_at` integer,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `labs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`code_prefix` text NOT NULL,
	`city` text,
	`last_mapping` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `labs_name_unique` ON `labs` (`name`);--> statement-breakpoint
CREATE UNIQUE INDEX `labs_code_prefix_unique` ON `labs` (`code_prefix`);--> statement-breakpoint
CREATE TABLE `materials` (
	`name` text PRIMARY KEY NOT NULL,
	`methods` text NOT NULL,
	`marine` integer DEFAULT false NOT NULL
);
--> statement-breakpoint
CREATE TABLE `model_run_scores` (
	`run_id` integer NOT NULL,
	`determination_id` integer NOT NULL,
	`score` real NOT NULL,
	`log_likelihood` real NOT NULL,
	PRIMARY KEY(`run_id`, `determination_id`),
	FOREIGN KEY (`run_id`) REFERENCES `model_runs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`determination_id`) REFERENCES `determinations`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `model_runs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`user_id` integer NOT NULL,
	`release_id` integer,
	`name` text NOT NULL,
	`ensemble` text,
	`file_name` text,
	`format` text NOT NULL,
	`status` text DEFAULT 'uploaded' NOT NULL,
	`total_log_likelihood` real,
	`error` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`release_id`) REFERENCES `releases`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `model_runs_user_idx` ON `model_runs` (`user_id`);--> statement-breakpoint
CREATE TABLE `publications` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`citation` text NOT NULL,
	`doi` text,
	`year` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `publications_doi_unique` ON `publications` (`doi`);--> statement-breakpoint
CREATE TABLE `rate_limits` (
	`key` text PRIMARY KEY NOT NULL,
	`window_start` integer NOT NULL,
	`count` integer NOT NULL
);
--> statement-breakpoint
CREATE TABLE `reconstructions` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`description` text,
	`geojson` text NOT NULL,
	`is_demo` integer DEFAULT false NOT NULL,
	`created_by` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `release_items` (
	`release_id` integer NOT NULL,
	`determination_id` integer NOT NULL,
	`frozen` text NOT NULL,
	PRIMARY KEY(`release_id`, `determination_id`),
	FOREIGN KEY (`release_id`) REFERENCES `releases`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`determination_id`) REFERENCES `determinations`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `releases` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`slug` text NOT NULL,
	`name` text NOT NULL,
	`description` text,
	`filter` text NOT NULL,
	`curve_versions` text NOT NULL,
	`item_count` integer NOT NULL,
	`checksum` text NOT NULL,
	`created_by` integer NOT NULL,
	`published_at` integer NOT NULL,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `releases_slug_unique` ON `releases` (`slug`);--> statement-breakpoint
CREATE TABLE `review_messages` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`determination_id` integer NOT NULL,
	`author_id` integer NOT NULL,
	`body` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`determination_id`) REFERENCES `determinations`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `review_messages_det_idx` ON `review_messages` (`determination_id`);--> statement-breakpoint
CREATE TABLE `reviews` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`determination_id` integer NOT NULL,
	`reviewer_id` integer NOT NULL,
	`grade` integer NOT NULL,
	`flags` text DEFAULT '[]' NOT NULL,
	`comment` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`determination_id`) REFERENCES `determinations`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`reviewer_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`grade`) REFERENCES `grades`(`value`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `reviews_det_idx` ON `reviews` (`determination_id`);--> statement-breakpoint
CREATE TABLE `roles` (
	`name` text PRIMARY KEY NOT NULL,
	`description` text NOT NULL
);
--> statement-breakpoint
CREATE TABLE `samples` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`site_id` integer NOT NULL,
	`field_code` text NOT NULL,
	`material` text NOT NULL,
	`depth_cm` real,
	`strat_unit` text,
	`strat_order` integer,
	`context` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`site_id`) REFERENCES `sites`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`material`) REFERENCES `materials`(`name`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `samples_site_idx` ON `samples` (`site_id`);--> statement-breakpoint
CREATE UNIQUE INDEX `samples_site_code_idx` ON `samples` (`site_id`,`field_code`);--> statement-breakpoint
CREATE TABLE `scenario_truth` (
	`determination_id` integer PRIMARY KEY NOT NULL,
	`true_age_cal_bp` real NOT NULL,
	`planted_fault` text,
	FOREIGN KEY (`determination_id`) REFERENCES `determinations`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `sessions` (
	`id` text PRIMARY KEY NOT NULL,
	`user_id` integer NOT NULL,
	`expires_at` integer NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`last_seen_at` integer,
	`user_agent` text,
	`ip` text,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `sessions_user_idx` ON `sessions` (`user_id`);--> statement-breakpoint
CREATE TABLE `sites` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`latitude` real NOT NULL,
	`longitude` real NOT NULL,
	`elevation_m` real,
	`location_uncertainty_m` real,
	`setting` text,
	`region` text,
	`notes` text,
	`created_by` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `sites_name_idx` ON `sites` (`name`);--> statement-breakpoint
CREATE INDEX `sites_latlon_idx` ON `sites` (`latitude`,`longitude`);--> statement-breakpoint
CREATE TABLE `upload_batches` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`public_id` text NOT NULL,
	`user_id` integer NOT NULL,
	`lab_id` integer,
	`file_name` text NOT NULL,
	`file_kind` text NOT NULL,
	`file_size_bytes` integer NOT NULL,
	`status` text DEFAULT 'parsed' NOT NULL,
	`mapping` text,
	`row_count` integer DEFAULT 0 NOT NULL,
	`valid_count` integer DEFAULT 0 NOT NULL,
	`committed_count` integer DEFAULT 0 NOT NULL,
	`errors` text,
	`payload` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`committed_at` integer,
	`undone_at` integer,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`lab_id`) REFERENCES `labs`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `upload_batches_public_id_unique` ON `upload_batches` (`public_id`);--> statement-breakpoint
CREATE INDEX `uploads_user_idx` ON `upload_batches` (`user_id`);--> statement-breakpoint
CREATE TABLE `user_roles` (
	`user_id` integer NOT NULL,
	`role` text NOT NULL,
	PRIMARY KEY(`user_id`, `role`),
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`role`) REFERENCES `roles`(`name`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `users` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`email` text NOT NULL,
	`name` text NOT NULL,
	`active` integer DEFAULT true NOT NULL,
	`lab_id` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`last_sign_in_at` integer,
	FOREIGN KEY (`lab_id`) REFERENCES `labs`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `users_email_unique` ON `users` (`email`);