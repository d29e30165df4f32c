ALTER TABLE `outbox` MODIFY COLUMN `text_body` text;--> statement-breakpoint
ALTER TABLE `outbox` MODIFY COLUMN `html_body` mediumtext;--> statement-breakpoint
ALTER TABLE `outbox` ADD `template` varchar(40);--> statement-breakpoint
ALTER TABLE `outbox` ADD `data` longtext;