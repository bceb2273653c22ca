ALTER TABLE `publications` ADD `authors` text;--> statement-breakpoint
ALTER TABLE `publications` ADD `title` text;--> statement-breakpoint
ALTER TABLE `publications` ADD `journal` text;--> statement-breakpoint
UPDATE `publications` SET `citation` = 'untitled — doi:' || `doi` WHERE `title` IS NULL AND `doi` IS NOT NULL AND `citation` = 'DOI ' || `doi`;
