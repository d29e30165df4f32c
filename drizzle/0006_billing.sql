CREATE TABLE `closed_months` (
	`month` char(7) NOT NULL,
	`closed_by` int,
	`closed_at` datetime NOT NULL,
	CONSTRAINT `closed_months_month` PRIMARY KEY(`month`)
);
--> statement-breakpoint
CREATE TABLE `statement_snapshots` (
	`month` char(7) NOT NULL,
	`group_id` int NOT NULL,
	`statement` json NOT NULL,
	CONSTRAINT `statement_snapshots_month_group_id_pk` PRIMARY KEY(`month`,`group_id`)
);
--> statement-breakpoint
ALTER TABLE `research_groups` ADD `external` boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE `boxes` ADD `cancel_window_hours` smallint DEFAULT 24 NOT NULL;--> statement-breakpoint
ALTER TABLE `boxes` ADD `no_show_grace_min` smallint DEFAULT 15 NOT NULL;--> statement-breakpoint
ALTER TABLE `bookings` ADD `group_id` int;--> statement-breakpoint
ALTER TABLE `closed_months` ADD CONSTRAINT `closed_months_closed_by_users_id_fk` FOREIGN KEY (`closed_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `statement_snapshots` ADD CONSTRAINT `statement_snapshots_month_closed_months_month_fk` FOREIGN KEY (`month`) REFERENCES `closed_months`(`month`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `statement_snapshots` ADD CONSTRAINT `statement_snapshots_group_id_research_groups_id_fk` FOREIGN KEY (`group_id`) REFERENCES `research_groups`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bookings` ADD CONSTRAINT `bookings_group_id_research_groups_id_fk` FOREIGN KEY (`group_id`) REFERENCES `research_groups`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `bookings_group_start_idx` ON `bookings` (`group_id`,`start_at`);--> statement-breakpoint
-- Bookings made before this migration are billed to their booker's (first) active group.
UPDATE `bookings` b JOIN (SELECT `user_id`, MIN(`group_id`) AS `group_id` FROM `group_memberships` WHERE `status` = 'active' GROUP BY `user_id`) m ON m.`user_id` = b.`user_id` SET b.`group_id` = m.`group_id` WHERE b.`group_id` IS NULL;
