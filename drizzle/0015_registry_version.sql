CREATE TABLE `registry_version` (
	`id` integer PRIMARY KEY NOT NULL,
	`n` integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
INSERT INTO `registry_version` (`id`, `n`) VALUES (1, 0);
--> statement-breakpoint
CREATE TRIGGER `registry_version_calibrations_insert` AFTER INSERT ON `calibrations` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_calibrations_update` AFTER UPDATE ON `calibrations` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_calibrations_delete` AFTER DELETE ON `calibrations` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_check_results_insert` AFTER INSERT ON `check_results` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_check_results_update` AFTER UPDATE ON `check_results` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_check_results_delete` AFTER DELETE ON `check_results` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_constraint_sets_insert` AFTER INSERT ON `constraint_sets` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_constraint_sets_update` AFTER UPDATE ON `constraint_sets` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_constraint_sets_delete` AFTER DELETE ON `constraint_sets` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_curve_points_insert` AFTER INSERT ON `curve_points` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_curve_points_update` AFTER UPDATE ON `curve_points` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_curve_points_delete` AFTER DELETE ON `curve_points` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_curves_insert` AFTER INSERT ON `curves` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_curves_update` AFTER UPDATE ON `curves` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_curves_delete` AFTER DELETE ON `curves` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_determinations_insert` AFTER INSERT ON `determinations` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_determinations_update` AFTER UPDATE ON `determinations` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_determinations_delete` AFTER DELETE ON `determinations` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_grades_insert` AFTER INSERT ON `grades` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_grades_update` AFTER UPDATE ON `grades` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_grades_delete` AFTER DELETE ON `grades` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_labs_insert` AFTER INSERT ON `labs` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_labs_update` AFTER UPDATE ON `labs` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_labs_delete` AFTER DELETE ON `labs` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_materials_insert` AFTER INSERT ON `materials` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_materials_update` AFTER UPDATE ON `materials` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_materials_delete` AFTER DELETE ON `materials` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_publications_insert` AFTER INSERT ON `publications` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_publications_update` AFTER UPDATE ON `publications` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_publications_delete` AFTER DELETE ON `publications` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_release_items_insert` AFTER INSERT ON `release_items` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_release_items_update` AFTER UPDATE ON `release_items` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_release_items_delete` AFTER DELETE ON `release_items` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_releases_insert` AFTER INSERT ON `releases` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_releases_update` AFTER UPDATE ON `releases` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_releases_delete` AFTER DELETE ON `releases` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_review_messages_insert` AFTER INSERT ON `review_messages` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_review_messages_update` AFTER UPDATE ON `review_messages` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_review_messages_delete` AFTER DELETE ON `review_messages` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_reviews_insert` AFTER INSERT ON `reviews` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_reviews_update` AFTER UPDATE ON `reviews` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_reviews_delete` AFTER DELETE ON `reviews` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_roles_insert` AFTER INSERT ON `roles` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_roles_update` AFTER UPDATE ON `roles` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_roles_delete` AFTER DELETE ON `roles` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_samples_insert` AFTER INSERT ON `samples` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_samples_update` AFTER UPDATE ON `samples` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_samples_delete` AFTER DELETE ON `samples` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_scenario_truth_insert` AFTER INSERT ON `scenario_truth` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_scenario_truth_update` AFTER UPDATE ON `scenario_truth` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_scenario_truth_delete` AFTER DELETE ON `scenario_truth` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_sites_insert` AFTER INSERT ON `sites` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_sites_update` AFTER UPDATE ON `sites` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_sites_delete` AFTER DELETE ON `sites` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_upload_batches_insert` AFTER INSERT ON `upload_batches` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_upload_batches_update` AFTER UPDATE ON `upload_batches` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_upload_batches_delete` AFTER DELETE ON `upload_batches` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_user_roles_insert` AFTER INSERT ON `user_roles` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_user_roles_update` AFTER UPDATE ON `user_roles` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_user_roles_delete` AFTER DELETE ON `user_roles` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_users_insert` AFTER INSERT ON `users` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_users_update` AFTER UPDATE ON `users` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER `registry_version_users_delete` AFTER DELETE ON `users` BEGIN UPDATE `registry_version` SET `n` = `n` + 1 WHERE `id` = 1; END;
