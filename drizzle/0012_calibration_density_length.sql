DROP INDEX `cal_current_median_idx`;--> statement-breakpoint
DROP INDEX `cal_det_current_cover_idx`;--> statement-breakpoint
ALTER TABLE `calibrations` ADD `density_length` integer;--> statement-breakpoint
-- Backfill: the density is Float32, four bytes a value. (density_sha256 is filled when a release first names the calibration.)
UPDATE `calibrations` SET `density_length` = length(`density`) / 4 WHERE `density` IS NOT NULL;--> statement-breakpoint
CREATE INDEX `cal_current_median_idx` ON `calibrations` (`is_current`,`median_cal_bp`,`hpd95_from_bp`,`hpd95_to_bp`,`curve_id`,`determination_id`);--> statement-breakpoint
CREATE INDEX `cal_det_current_cover_idx` ON `calibrations` (`determination_id`,`is_current`,`median_cal_bp`,`hpd95_from_bp`,`hpd95_to_bp`,`curve_id`,`curve_label`,`hpd68`,`hpd95`,`density_start_cal_bp`,`density_length`,`density_sha256`);