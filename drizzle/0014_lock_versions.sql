ALTER TABLE `users` ADD COLUMN IF NOT EXISTS `lock_version` int DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE `boxes` ADD COLUMN IF NOT EXISTS `lock_version` int DEFAULT 0 NOT NULL;