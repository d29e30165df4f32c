CREATE TABLE `documents` (
	`id` int AUTO_INCREMENT NOT NULL,
	`box_id` int,
	`module_id` int,
	`title` varchar(160) NOT NULL,
	`storage_key` varchar(120) NOT NULL,
	`size_bytes` int NOT NULL,
	`uploaded_by` int,
	`uploaded_at` datetime NOT NULL DEFAULT CURRENT_TIMESTAMP,
	CONSTRAINT `documents_id` PRIMARY KEY(`id`),
	CONSTRAINT `documents_storageKey_unique` UNIQUE(`storage_key`)
);
--> statement-breakpoint
CREATE TABLE `leak_tests` (
	`id` int AUTO_INCREMENT NOT NULL,
	`box_id` int NOT NULL,
	`method` enum('oxygen','pressure') NOT NULL,
	`inputs` json NOT NULL,
	`hourly_leak_rate` double NOT NULL,
	`iso_class` tinyint,
	`required_class` tinyint NOT NULL,
	`passed` boolean NOT NULL,
	`note` varchar(500),
	`tested_at` datetime NOT NULL,
	`tested_by` int,
	`created_at` datetime NOT NULL DEFAULT CURRENT_TIMESTAMP,
	CONSTRAINT `leak_tests_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `maintenance_log` (
	`id` int AUTO_INCREMENT NOT NULL,
	`task_id` int NOT NULL,
	`done_at` datetime NOT NULL,
	`done_by` int,
	`note` varchar(500),
	`outage_id` int,
	CONSTRAINT `maintenance_log_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `maintenance_tasks` (
	`id` int AUTO_INCREMENT NOT NULL,
	`box_id` int NOT NULL,
	`kind` enum('purifier_regeneration','sensor_calibration','pump_oil','antechamber_seals','glove_inspection','other') NOT NULL,
	`title` varchar(120) NOT NULL,
	`interval_days` smallint NOT NULL,
	`outage_minutes` smallint NOT NULL DEFAULT 0,
	`last_done_at` datetime,
	`next_due_at` datetime NOT NULL,
	`notified_due_at` datetime,
	`planned_outage_id` int,
	`active` boolean NOT NULL DEFAULT true,
	`created_at` datetime NOT NULL DEFAULT CURRENT_TIMESTAMP,
	CONSTRAINT `maintenance_tasks_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
ALTER TABLE `boxes` ADD `required_leak_class` tinyint DEFAULT 3 NOT NULL;--> statement-breakpoint
ALTER TABLE `boxes` ADD `glove_change_needs_proof` boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE `atmosphere_readings` ADD `booking_id` int;--> statement-breakpoint
ALTER TABLE `atmosphere_readings` ADD `note` varchar(500);--> statement-breakpoint
-- Keep the first of any readings that share a box and second, then make that unique.
DELETE r1 FROM `atmosphere_readings` r1 JOIN `atmosphere_readings` r2 ON r1.`box_id` = r2.`box_id` AND r1.`at` = r2.`at` AND r1.`id` > r2.`id`;--> statement-breakpoint
ALTER TABLE `atmosphere_readings` ADD CONSTRAINT `atmosphere_readings_box_at_uq` UNIQUE(`box_id`,`at`);--> statement-breakpoint
DROP INDEX `atmosphere_readings_box_at_idx` ON `atmosphere_readings`;--> statement-breakpoint
ALTER TABLE `documents` ADD CONSTRAINT `documents_box_id_boxes_id_fk` FOREIGN KEY (`box_id`) REFERENCES `boxes`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `documents` ADD CONSTRAINT `documents_module_id_training_modules_id_fk` FOREIGN KEY (`module_id`) REFERENCES `training_modules`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `documents` ADD CONSTRAINT `documents_uploaded_by_users_id_fk` FOREIGN KEY (`uploaded_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `leak_tests` ADD CONSTRAINT `leak_tests_box_id_boxes_id_fk` FOREIGN KEY (`box_id`) REFERENCES `boxes`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `leak_tests` ADD CONSTRAINT `leak_tests_tested_by_users_id_fk` FOREIGN KEY (`tested_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `maintenance_log` ADD CONSTRAINT `maintenance_log_task_id_maintenance_tasks_id_fk` FOREIGN KEY (`task_id`) REFERENCES `maintenance_tasks`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `maintenance_log` ADD CONSTRAINT `maintenance_log_done_by_users_id_fk` FOREIGN KEY (`done_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `maintenance_log` ADD CONSTRAINT `maintenance_log_outage_id_outages_id_fk` FOREIGN KEY (`outage_id`) REFERENCES `outages`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `maintenance_tasks` ADD CONSTRAINT `maintenance_tasks_box_id_boxes_id_fk` FOREIGN KEY (`box_id`) REFERENCES `boxes`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `maintenance_tasks` ADD CONSTRAINT `maintenance_tasks_planned_outage_id_outages_id_fk` FOREIGN KEY (`planned_outage_id`) REFERENCES `outages`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `documents_box_idx` ON `documents` (`box_id`);--> statement-breakpoint
CREATE INDEX `documents_module_idx` ON `documents` (`module_id`);--> statement-breakpoint
CREATE INDEX `leak_tests_box_tested_idx` ON `leak_tests` (`box_id`,`tested_at`);--> statement-breakpoint
CREATE INDEX `maintenance_log_task_idx` ON `maintenance_log` (`task_id`,`done_at`);--> statement-breakpoint
CREATE INDEX `maintenance_tasks_due_idx` ON `maintenance_tasks` (`active`,`next_due_at`);--> statement-breakpoint
CREATE INDEX `atmosphere_readings_booking_idx` ON `atmosphere_readings` (`booking_id`);