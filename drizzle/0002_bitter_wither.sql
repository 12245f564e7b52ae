CREATE TABLE `flag_notices` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`part_id` bigint unsigned NOT NULL,
	`open_part_id` bigint unsigned,
	`reason` varchar(32) NOT NULL,
	`available` int NOT NULL,
	`reported_at` datetime(3) NOT NULL,
	`cleared_at` datetime(3),
	CONSTRAINT `flag_notices_id` PRIMARY KEY(`id`),
	CONSTRAINT `flag_notices_open_uq` UNIQUE(`open_part_id`)
);
--> statement-breakpoint
CREATE TABLE `purchase_request_events` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`request_id` bigint unsigned NOT NULL,
	`user_id` bigint unsigned NOT NULL,
	`from_status` enum('draft','requested','ordered','partly-received','received','closed','cancelled'),
	`to_status` enum('draft','requested','ordered','partly-received','received','closed','cancelled') NOT NULL,
	`quantity` int unsigned,
	`location_id` bigint unsigned,
	`movement_id` bigint unsigned,
	`note` text,
	`at` datetime(3) NOT NULL,
	CONSTRAINT `purchase_request_events_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `purchase_requests` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`part_id` bigint unsigned NOT NULL,
	`supplier_id` bigint unsigned,
	`status` enum('draft','requested','ordered','partly-received','received','closed','cancelled') NOT NULL DEFAULT 'draft',
	`quantity` int unsigned NOT NULL,
	`received_quantity` int unsigned NOT NULL DEFAULT 0,
	`unit_price_minor` int,
	`currency` char(3) NOT NULL DEFAULT 'EUR',
	`lead_time_days` int,
	`order_reference` varchar(80),
	`note` text,
	`created_by` bigint unsigned NOT NULL,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `purchase_requests_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
ALTER TABLE `flag_notices` ADD CONSTRAINT `flag_notices_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `purchase_request_events` ADD CONSTRAINT `purchase_request_events_request_id_purchase_requests_id_fk` FOREIGN KEY (`request_id`) REFERENCES `purchase_requests`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `purchase_request_events` ADD CONSTRAINT `purchase_request_events_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `purchase_request_events` ADD CONSTRAINT `purchase_request_events_location_id_locations_id_fk` FOREIGN KEY (`location_id`) REFERENCES `locations`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `purchase_request_events` ADD CONSTRAINT `purchase_request_events_movement_id_movements_id_fk` FOREIGN KEY (`movement_id`) REFERENCES `movements`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `purchase_requests` ADD CONSTRAINT `purchase_requests_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `purchase_requests` ADD CONSTRAINT `purchase_requests_supplier_id_suppliers_id_fk` FOREIGN KEY (`supplier_id`) REFERENCES `suppliers`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `purchase_requests` ADD CONSTRAINT `purchase_requests_created_by_users_id_fk` FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `flag_notices_part_idx` ON `flag_notices` (`part_id`,`reported_at`);--> statement-breakpoint
CREATE INDEX `purchase_request_events_request_idx` ON `purchase_request_events` (`request_id`,`at`);--> statement-breakpoint
CREATE INDEX `purchase_requests_part_idx` ON `purchase_requests` (`part_id`,`status`);--> statement-breakpoint
CREATE INDEX `purchase_requests_status_idx` ON `purchase_requests` (`status`,`updated_at`);