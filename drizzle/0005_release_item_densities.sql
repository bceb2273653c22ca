ALTER TABLE `release_items` ADD `density_start_cal_bp` integer;--> statement-breakpoint
ALTER TABLE `release_items` ADD `density` blob;