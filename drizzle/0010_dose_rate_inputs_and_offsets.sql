ALTER TABLE `determinations` ADD `freshwater_offset_yr` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `freshwater_offset_error_yr` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `normalised_to_zero_permil` integer DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE `determinations` ADD `dose_rate_computed` integer DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE `determinations` ADD `k_error_percent` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `u_error_ppm` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `th_error_ppm` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `rb_ppm` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `rb_error_ppm` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `water_content_error_fraction` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `grain_use` text;--> statement-breakpoint
ALTER TABLE `determinations` ADD `etch_depth_um` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `a_value` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `a_value_error` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `internal_k_percent` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `internal_k_error_percent` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `internal_rb_ppm` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `internal_rb_error_ppm` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `burial_depth_error_m` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `density_error_g_per_cm3` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `lab_cosmic_gy_per_ka` real;--> statement-breakpoint
ALTER TABLE `determinations` ADD `lab_cosmic_error_gy_per_ka` real;--> statement-breakpoint
UPDATE `determinations` SET `dose_rate_computed` = 1 WHERE `method` = 'luminescence' AND `conversion_factors` IS NOT NULL AND `k_percent` IS NOT NULL AND `u_ppm` IS NOT NULL AND `th_ppm` IS NOT NULL AND `water_content_fraction` IS NOT NULL;
