ALTER TABLE `users` ADD `feed_token_hash` varchar(64);--> statement-breakpoint
ALTER TABLE `users` ADD `feed_token_created_at` datetime;--> statement-breakpoint
ALTER TABLE `users` ADD CONSTRAINT `users_feedTokenHash_unique` UNIQUE(`feed_token_hash`);