CREATE TABLE `account_tokens` (
	`id` int AUTO_INCREMENT NOT NULL,
	`user_id` int NOT NULL,
	`kind` enum('reset','invite') NOT NULL,
	`token_hash` char(64) NOT NULL,
	`expires_at` datetime NOT NULL,
	`used_at` datetime,
	`created_by` int,
	`created_at` datetime NOT NULL DEFAULT CURRENT_TIMESTAMP,
	CONSTRAINT `account_tokens_id` PRIMARY KEY(`id`),
	CONSTRAINT `account_tokens_tokenHash_unique` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `training_requests` (
	`id` int AUTO_INCREMENT NOT NULL,
	`user_id` int NOT NULL,
	`module_id` int NOT NULL,
	`note` varchar(500),
	`status` enum('open','granted','declined','withdrawn') NOT NULL DEFAULT 'open',
	`created_at` datetime NOT NULL DEFAULT CURRENT_TIMESTAMP,
	`decided_at` datetime,
	`decided_by` int,
	`decision_note` varchar(500),
	CONSTRAINT `training_requests_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `booking_watches` (
	`id` int AUTO_INCREMENT NOT NULL,
	`user_id` int NOT NULL,
	`box_id` int NOT NULL,
	`start_at` datetime NOT NULL,
	`end_at` datetime NOT NULL,
	`created_at` datetime NOT NULL DEFAULT CURRENT_TIMESTAMP,
	`notified_at` datetime,
	CONSTRAINT `booking_watches_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
ALTER TABLE `users` MODIFY COLUMN `status` enum('pending','invited','active','suspended') NOT NULL DEFAULT 'pending';--> statement-breakpoint
ALTER TABLE `bookings` ADD `series_id` int;--> statement-breakpoint
ALTER TABLE `account_tokens` ADD CONSTRAINT `account_tokens_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `training_requests` ADD CONSTRAINT `training_requests_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `training_requests` ADD CONSTRAINT `training_requests_module_id_training_modules_id_fk` FOREIGN KEY (`module_id`) REFERENCES `training_modules`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `booking_watches` ADD CONSTRAINT `booking_watches_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `booking_watches` ADD CONSTRAINT `booking_watches_box_id_boxes_id_fk` FOREIGN KEY (`box_id`) REFERENCES `boxes`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `account_tokens_user_idx` ON `account_tokens` (`user_id`,`kind`);--> statement-breakpoint
CREATE INDEX `training_requests_module_idx` ON `training_requests` (`module_id`,`status`);--> statement-breakpoint
CREATE INDEX `training_requests_user_idx` ON `training_requests` (`user_id`,`status`);--> statement-breakpoint
CREATE INDEX `booking_watches_box_idx` ON `booking_watches` (`box_id`,`notified_at`,`start_at`);