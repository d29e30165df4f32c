CREATE TABLE `glove_stock` (
	`id` int AUTO_INCREMENT NOT NULL,
	`material` enum('butyl','neoprene','csm','polyurethane','nitrile','other') NOT NULL,
	`size` varchar(10) NOT NULL,
	`thickness_mm` decimal(4,2) NOT NULL,
	`hand` enum('left','right','ambidextrous') NOT NULL,
	`quantity` int NOT NULL DEFAULT 0,
	`min_quantity` int NOT NULL DEFAULT 1,
	`updated_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `glove_stock_id` PRIMARY KEY(`id`),
	CONSTRAINT `glove_stock_kind_idx` UNIQUE(`material`,`size`,`thickness_mm`,`hand`)
);
--> statement-breakpoint
ALTER TABLE `bookings` ADD `outage_id` int;--> statement-breakpoint
ALTER TABLE `glove_changes` ADD `status` enum('open','completed','abandoned') DEFAULT 'open' NOT NULL;--> statement-breakpoint
ALTER TABLE `glove_changes` ADD `glove_volume_l` decimal(5,2);--> statement-breakpoint
ALTER TABLE `glove_changes` ADD `hand_confirmed` boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE `glove_changes` ADD `abandoned_at` datetime;--> statement-breakpoint
ALTER TABLE `glove_changes` ADD `abandoned_by` int;--> statement-breakpoint
ALTER TABLE `glove_changes` ADD `abandon_reason` varchar(1000);--> statement-breakpoint
ALTER TABLE `bookings` ADD CONSTRAINT `bookings_outage_id_outages_id_fk` FOREIGN KEY (`outage_id`) REFERENCES `outages`(`id`) ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `bookings_outage_idx` ON `bookings` (`outage_id`);--> statement-breakpoint
CREATE INDEX `glove_changes_port_idx` ON `glove_changes` (`port_id`,`status`);--> statement-breakpoint
UPDATE `glove_changes` SET `status` = 'completed' WHERE `completed_at` IS NOT NULL;--> statement-breakpoint
UPDATE `bookings` b
	JOIN `audit_log` a ON a.`entity` = 'outage' AND a.`action` IN ('outage.created', 'outage.changed')
	JOIN JSON_TABLE(a.`details`, '$.cancelledBookingIds[*]' COLUMNS (`booking_id` int PATH '$')) j
		ON j.`booking_id` = b.`id`
	SET b.`outage_id` = CAST(a.`entity_id` AS UNSIGNED)
	WHERE b.`cancel_cause` = 'outage' AND b.`outage_id` IS NULL;
