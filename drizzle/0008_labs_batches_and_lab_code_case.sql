ALTER TABLE `labs` ADD `confirmed` integer DEFAULT true NOT NULL;--> statement-breakpoint
ALTER TABLE `labs` ADD `registered_by` integer REFERENCES users(id);--> statement-breakpoint
ALTER TABLE `samples` ADD `created_in_batch_id` integer REFERENCES upload_batches(id);--> statement-breakpoint
ALTER TABLE `sites` ADD `created_in_batch_id` integer REFERENCES upload_batches(id);--> statement-breakpoint
CREATE UNIQUE INDEX `det_lab_code_nocase_idx` ON `determinations` (lower("lab_code"));--> statement-breakpoint
-- Backfill: which batch created each site and sample, as the commit's audit entry recorded it.
UPDATE `samples` SET `created_in_batch_id` = (
  SELECT b.`id` FROM `audit_log` a
  JOIN `upload_batches` b ON b.`public_id` = a.`entity_id`, json_each(CASE WHEN json_valid(a.`after`) THEN a.`after` ELSE '{}' END, '$.createdSampleIds') j
  WHERE a.`action` = 'upload.commit' AND j.`value` = `samples`.`id`
  ORDER BY a.`id` DESC LIMIT 1
) WHERE `created_in_batch_id` IS NULL;--> statement-breakpoint
UPDATE `sites` SET `created_in_batch_id` = (
  SELECT b.`id` FROM `audit_log` a
  JOIN `upload_batches` b ON b.`public_id` = a.`entity_id`, json_each(CASE WHEN json_valid(a.`after`) THEN a.`after` ELSE '{}' END, '$.createdSiteIds') j
  WHERE a.`action` = 'upload.commit' AND j.`value` = `sites`.`id`
  ORDER BY a.`id` DESC LIMIT 1
) WHERE `created_in_batch_id` IS NULL;
