CREATE TABLE `certifications` (
	`id` int AUTO_INCREMENT NOT NULL,
	`user_id` int NOT NULL,
	`module_id` int NOT NULL,
	`granted_at` datetime NOT NULL,
	`expires_at` datetime NOT NULL,
	`granted_by` int,
	`note` varchar(500),
	`revoked_at` datetime,
	`revoked_by` int,
	`revoke_reason` varchar(500),
	CONSTRAINT `certifications_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `module_prerequisites` (
	`module_id` int NOT NULL,
	`requires_module_id` int NOT NULL,
	CONSTRAINT `module_prerequisites_module_id_requires_module_id_pk` PRIMARY KEY(`module_id`,`requires_module_id`)
);
--> statement-breakpoint
CREATE TABLE `module_trainers` (
	`module_id` int NOT NULL,
	`user_id` int NOT NULL,
	CONSTRAINT `module_trainers_module_id_user_id_pk` PRIMARY KEY(`module_id`,`user_id`)
);
--> statement-breakpoint
CREATE TABLE `training_modules` (
	`id` int AUTO_INCREMENT NOT NULL,
	`name` varchar(120) NOT NULL,
	`description` text,
	`validity_months` smallint NOT NULL,
	`created_at` datetime NOT NULL DEFAULT CURRENT_TIMESTAMP,
	CONSTRAINT `training_modules_id` PRIMARY KEY(`id`),
	CONSTRAINT `training_modules_name_unique` UNIQUE(`name`)
);
--> statement-breakpoint
CREATE TABLE `box_ports` (
	`id` int AUTO_INCREMENT NOT NULL,
	`box_id` int NOT NULL,
	`position` varchar(40) NOT NULL,
	`diameter_mm` smallint NOT NULL,
	`sort_order` smallint NOT NULL DEFAULT 0,
	CONSTRAINT `box_ports_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `box_required_modules` (
	`box_id` int NOT NULL,
	`module_id` int NOT NULL,
	CONSTRAINT `box_required_modules_box_id_module_id_pk` PRIMARY KEY(`box_id`,`module_id`)
);
--> statement-breakpoint
CREATE TABLE `boxes` (
	`id` int AUTO_INCREMENT NOT NULL,
	`name` varchar(80) NOT NULL,
	`room` varchar(80) NOT NULL,
	`gas` enum('Ar','N2') NOT NULL,
	`volume_l` int NOT NULL,
	`description` text,
	`status` enum('in_service','out_of_service') NOT NULL DEFAULT 'in_service',
	`atmosphere_state` enum('ok','watch','alarm') NOT NULL DEFAULT 'ok',
	`o2_warn_ppm` decimal(8,2) NOT NULL DEFAULT 1,
	`o2_alarm_ppm` decimal(8,2) NOT NULL DEFAULT 10,
	`h2o_warn_ppm` decimal(8,2) NOT NULL DEFAULT 1,
	`h2o_alarm_ppm` decimal(8,2) NOT NULL DEFAULT 10,
	`rate_internal` decimal(10,2) NOT NULL DEFAULT 0,
	`rate_external` decimal(10,2) NOT NULL DEFAULT 0,
	`slot_step_min` smallint NOT NULL DEFAULT 15,
	`min_length_min` smallint NOT NULL DEFAULT 30,
	`max_length_min` smallint NOT NULL DEFAULT 240,
	`horizon_days` smallint NOT NULL DEFAULT 28,
	`weekly_quota_min` smallint NOT NULL DEFAULT 720,
	`purge_min` smallint NOT NULL DEFAULT 30,
	`needs_approval` boolean NOT NULL DEFAULT false,
	`excluded_classes` json NOT NULL DEFAULT ('[]'),
	`created_at` datetime NOT NULL DEFAULT CURRENT_TIMESTAMP,
	CONSTRAINT `boxes_id` PRIMARY KEY(`id`),
	CONSTRAINT `boxes_name_unique` UNIQUE(`name`)
);
--> statement-breakpoint
CREATE TABLE `bookings` (
	`id` int AUTO_INCREMENT NOT NULL,
	`box_id` int NOT NULL,
	`user_id` int NOT NULL,
	`start_at` datetime NOT NULL,
	`end_at` datetime NOT NULL,
	`blocked_until` datetime NOT NULL,
	`purpose` varchar(200) NOT NULL,
	`chemical_classes` json NOT NULL DEFAULT ('[]'),
	`volatile_solvents` boolean NOT NULL DEFAULT false,
	`status` enum('pending','confirmed','cancelled','completed','no_show') NOT NULL,
	`cancel_reason` varchar(500),
	`cancel_cause` enum('user','manager','outage'),
	`cancelled_at` datetime,
	`cancelled_by` int,
	`decided_by` int,
	`decided_at` datetime,
	`check_in_at` datetime,
	`check_out_at` datetime,
	`sequence` int NOT NULL DEFAULT 0,
	`created_at` datetime NOT NULL DEFAULT CURRENT_TIMESTAMP,
	`updated_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `bookings_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `outages` (
	`id` int AUTO_INCREMENT NOT NULL,
	`box_id` int NOT NULL,
	`start_at` datetime NOT NULL,
	`end_at` datetime NOT NULL,
	`kind` enum('glove_change','regeneration','leak','sensor','atmosphere','other') NOT NULL,
	`reason` varchar(500) NOT NULL,
	`created_by` int,
	`created_at` datetime NOT NULL DEFAULT CURRENT_TIMESTAMP,
	`sequence` int NOT NULL DEFAULT 0,
	`updated_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `outages_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `atmosphere_readings` (
	`id` bigint AUTO_INCREMENT NOT NULL,
	`box_id` int NOT NULL,
	`at` datetime NOT NULL,
	`o2_ppm` decimal(10,3) NOT NULL,
	`h2o_ppm` decimal(10,3) NOT NULL,
	`source` enum('manual','check_in','check_out','csv') NOT NULL,
	`recorded_by` int,
	CONSTRAINT `atmosphere_readings_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
ALTER TABLE `certifications` ADD CONSTRAINT `certifications_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `certifications` ADD CONSTRAINT `certifications_module_id_training_modules_id_fk` FOREIGN KEY (`module_id`) REFERENCES `training_modules`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `certifications` ADD CONSTRAINT `certifications_granted_by_users_id_fk` FOREIGN KEY (`granted_by`) REFERENCES `users`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `module_prerequisites` ADD CONSTRAINT `module_prerequisites_module_id_training_modules_id_fk` FOREIGN KEY (`module_id`) REFERENCES `training_modules`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `module_prerequisites` ADD CONSTRAINT `module_prerequisites_requires_module_id_training_modules_id_fk` FOREIGN KEY (`requires_module_id`) REFERENCES `training_modules`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `module_trainers` ADD CONSTRAINT `module_trainers_module_id_training_modules_id_fk` FOREIGN KEY (`module_id`) REFERENCES `training_modules`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `module_trainers` ADD CONSTRAINT `module_trainers_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `box_ports` ADD CONSTRAINT `box_ports_box_id_boxes_id_fk` FOREIGN KEY (`box_id`) REFERENCES `boxes`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `box_required_modules` ADD CONSTRAINT `box_required_modules_box_id_boxes_id_fk` FOREIGN KEY (`box_id`) REFERENCES `boxes`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `box_required_modules` ADD CONSTRAINT `box_required_modules_module_id_training_modules_id_fk` FOREIGN KEY (`module_id`) REFERENCES `training_modules`(`id`) ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bookings` ADD CONSTRAINT `bookings_box_id_boxes_id_fk` FOREIGN KEY (`box_id`) REFERENCES `boxes`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `bookings` ADD CONSTRAINT `bookings_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `outages` ADD CONSTRAINT `outages_box_id_boxes_id_fk` FOREIGN KEY (`box_id`) REFERENCES `boxes`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `atmosphere_readings` ADD CONSTRAINT `atmosphere_readings_box_id_boxes_id_fk` FOREIGN KEY (`box_id`) REFERENCES `boxes`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `certifications_user_module_idx` ON `certifications` (`user_id`,`module_id`);--> statement-breakpoint
CREATE INDEX `box_ports_box_idx` ON `box_ports` (`box_id`);--> statement-breakpoint
CREATE INDEX `bookings_box_start_idx` ON `bookings` (`box_id`,`start_at`);--> statement-breakpoint
CREATE INDEX `bookings_box_end_idx` ON `bookings` (`box_id`,`blocked_until`);--> statement-breakpoint
CREATE INDEX `bookings_user_start_idx` ON `bookings` (`user_id`,`start_at`);--> statement-breakpoint
CREATE INDEX `outages_box_start_idx` ON `outages` (`box_id`,`start_at`);--> statement-breakpoint
CREATE INDEX `atmosphere_readings_box_at_idx` ON `atmosphere_readings` (`box_id`,`at`);