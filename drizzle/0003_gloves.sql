CREATE TABLE `glove_changes` (
	`id` int AUTO_INCREMENT NOT NULL,
	`outage_id` int NOT NULL,
	`port_id` int NOT NULL,
	`old_glove_id` int,
	`new_glove_id` int,
	`new_glove` json,
	`steps` json NOT NULL DEFAULT ('[]'),
	`flush_cycles` smallint NOT NULL DEFAULT 0,
	`override_note` varchar(1000),
	`started_by` int NOT NULL,
	`started_at` datetime NOT NULL,
	`completed_at` datetime,
	`completed_by` int,
	CONSTRAINT `glove_changes_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `glove_inspections` (
	`id` int AUTO_INCREMENT NOT NULL,
	`glove_id` int NOT NULL,
	`at` datetime NOT NULL,
	`by_user_id` int,
	`damaged` boolean NOT NULL DEFAULT false,
	`location` enum('fingertip','knuckle','palm','back_of_hand','forearm','cuff'),
	`hand` enum('left','right'),
	`hole_size_mm` decimal(6,1),
	`action` enum('none','patched','change_scheduled','replaced','box_out_of_service') NOT NULL DEFAULT 'none',
	`notes` varchar(1000),
	`photo_key` varchar(200),
	CONSTRAINT `glove_inspections_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `gloves` (
	`id` int AUTO_INCREMENT NOT NULL,
	`port_id` int NOT NULL,
	`material` enum('butyl','neoprene','csm','polyurethane','nitrile','other') NOT NULL,
	`thickness_mm` decimal(4,2) NOT NULL,
	`size` varchar(10) NOT NULL,
	`hand` enum('left','right','ambidextrous') NOT NULL,
	`turned_inside_out` boolean NOT NULL DEFAULT false,
	`installed_at` datetime NOT NULL,
	`removed_at` datetime,
	`removed_reason` varchar(300),
	CONSTRAINT `gloves_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
ALTER TABLE `glove_changes` ADD CONSTRAINT `glove_changes_outage_id_outages_id_fk` FOREIGN KEY (`outage_id`) REFERENCES `outages`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `glove_changes` ADD CONSTRAINT `glove_changes_port_id_box_ports_id_fk` FOREIGN KEY (`port_id`) REFERENCES `box_ports`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `glove_inspections` ADD CONSTRAINT `glove_inspections_glove_id_gloves_id_fk` FOREIGN KEY (`glove_id`) REFERENCES `gloves`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `gloves` ADD CONSTRAINT `gloves_port_id_box_ports_id_fk` FOREIGN KEY (`port_id`) REFERENCES `box_ports`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `glove_inspections_glove_idx` ON `glove_inspections` (`glove_id`,`at`);--> statement-breakpoint
CREATE INDEX `gloves_port_idx` ON `gloves` (`port_id`,`removed_at`);