DROP INDEX `cal_det_current_idx`;--> statement-breakpoint
ALTER TABLE `calibrations` ADD `density_sha256` text;--> statement-breakpoint
CREATE INDEX `cal_det_current_cover_idx` ON `calibrations` (`determination_id`,`is_current`,`median_cal_bp`,`hpd95_from_bp`,`hpd95_to_bp`,`curve_id`,`curve_label`,`hpd68`,`hpd95`);--> statement-breakpoint
DROP INDEX `checks_det_idx`;--> statement-breakpoint
CREATE INDEX `checks_det_cover_idx` ON `check_results` (`determination_id`,`check`,`severity`);--> statement-breakpoint
ALTER TABLE `release_items` ADD `calibration_id` integer REFERENCES calibrations(id);--> statement-breakpoint
CREATE INDEX `release_items_cal_idx` ON `release_items` (`calibration_id`);