ALTER TABLE `bookings` ADD `confirmed_at` datetime;--> statement-breakpoint
-- Bookings from before: confirmed when decided, or when made on a box without approval.
UPDATE `bookings` b JOIN `boxes` x ON x.`id` = b.`box_id` SET b.`confirmed_at` = COALESCE(b.`decided_at`, b.`created_at`) WHERE b.`status` IN ('confirmed', 'completed', 'no_show') OR (b.`status` = 'cancelled' AND (b.`decided_at` IS NOT NULL OR x.`needs_approval` = 0));
