CREATE TABLE `api_tokens` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`user_id` bigint unsigned NOT NULL,
	`name` varchar(80) NOT NULL,
	`token_hash` char(64) NOT NULL,
	`prefix` varchar(16) NOT NULL,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`last_used_at` datetime,
	`expires_at` datetime,
	`revoked_at` datetime,
	CONSTRAINT `api_tokens_id` PRIMARY KEY(`id`),
	CONSTRAINT `api_tokens_hash_uq` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `audit_events` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`actor_id` bigint unsigned,
	`action` varchar(64) NOT NULL,
	`target_type` varchar(32),
	`target_id` varchar(64),
	`detail` json,
	`at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `audit_events_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `auth_links` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`user_id` bigint unsigned NOT NULL,
	`purpose` enum('invite','reset') NOT NULL,
	`token_hash` char(64) NOT NULL,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`expires_at` datetime NOT NULL,
	`used_at` datetime,
	CONSTRAINT `auth_links_id` PRIMARY KEY(`id`),
	CONSTRAINT `auth_links_hash_uq` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `outbox_messages` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`message_id` varchar(255),
	`from_address` varchar(320) NOT NULL,
	`to_addresses` varchar(2000) NOT NULL,
	`subject` varchar(500) NOT NULL,
	`text_body` text,
	`html_body` text,
	`size_bytes` int NOT NULL,
	`received_at` datetime(3) NOT NULL,
	CONSTRAINT `outbox_messages_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `sessions` (
	`id` varchar(255) NOT NULL,
	`user_id` bigint unsigned NOT NULL,
	`expires_at` datetime NOT NULL,
	`created_at` datetime NOT NULL,
	`user_agent` varchar(255),
	CONSTRAINT `sessions_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `signin_failures` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`bucket` varchar(300) NOT NULL,
	`at` datetime(3) NOT NULL,
	CONSTRAINT `signin_failures_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `users` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`email` varchar(254) NOT NULL,
	`name` varchar(120) NOT NULL,
	`role` enum('admin','stockroom','engineer','purchaser') NOT NULL,
	`password_hash` varchar(255),
	`status` enum('active','disabled') NOT NULL DEFAULT 'active',
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `users_id` PRIMARY KEY(`id`),
	CONSTRAINT `users_email_uq` UNIQUE(`email`)
);
--> statement-breakpoint
CREATE TABLE `materials` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`code` varchar(32) NOT NULL,
	`name` varchar(120) NOT NULL,
	`model` enum('sellmeier','glass-code') NOT NULL,
	`nd` double NOT NULL,
	`vd` double NOT NULL,
	`notes` text,
	CONSTRAINT `materials_id` PRIMARY KEY(`id`),
	CONSTRAINT `materials_code_uq` UNIQUE(`code`)
);
--> statement-breakpoint
CREATE TABLE `measurements` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`part_id` bigint unsigned NOT NULL,
	`efl_mm` double NOT NULL,
	`wavelength_nm` double NOT NULL,
	`uncertainty_mm` double,
	`method` varchar(120),
	`measured_at` datetime NOT NULL,
	`measured_by` bigint unsigned,
	`note` text,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `measurements_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `part_surfaces` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`part_id` bigint unsigned NOT NULL,
	`position` int NOT NULL,
	`radius_mm` double,
	`thickness_mm` double,
	`material_code` varchar(32),
	CONSTRAINT `part_surfaces_id` PRIMARY KEY(`id`),
	CONSTRAINT `part_surfaces_part_pos_uq` UNIQUE(`part_id`,`position`)
);
--> statement-breakpoint
CREATE TABLE `parts` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`sku` varchar(40) NOT NULL,
	`name` varchar(200) NOT NULL,
	`kind` enum('plano-convex','biconvex','plano-concave','biconcave','positive-meniscus','negative-meniscus','achromatic-doublet','other') NOT NULL,
	`diameter_mm` double NOT NULL,
	`clear_aperture_mm` double,
	`efl_mm` double,
	`bfl_mm` double,
	`center_thickness_mm` double,
	`design_wavelength_nm` double NOT NULL DEFAULT 587.6,
	`paraxial_efl_mm` double,
	`efl_source` enum('prescription','nominal','measured'),
	`primary_material` varchar(32),
	`coating` varchar(80),
	`supplier_id` bigint unsigned,
	`supplier_part_number` varchar(80),
	`unit_price_minor` int,
	`currency` char(3) NOT NULL DEFAULT 'EUR',
	`lead_time_days` int,
	`reorder_point` int NOT NULL DEFAULT 0,
	`reorder_quantity` int NOT NULL DEFAULT 0,
	`notes` text,
	`archived_at` datetime,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `parts_id` PRIMARY KEY(`id`),
	CONSTRAINT `parts_sku_uq` UNIQUE(`sku`),
	CONSTRAINT `parts_supplier_pn_uq` UNIQUE(`supplier_id`,`supplier_part_number`)
);
--> statement-breakpoint
CREATE TABLE `settings` (
	`key` varchar(64) NOT NULL,
	`value` json NOT NULL,
	CONSTRAINT `settings_key` PRIMARY KEY(`key`)
);
--> statement-breakpoint
CREATE TABLE `suppliers` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`name` varchar(120) NOT NULL,
	`contact_email` varchar(254),
	`notes` text,
	`import_mapping` json,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `suppliers_id` PRIMARY KEY(`id`),
	CONSTRAINT `suppliers_name_uq` UNIQUE(`name`)
);
--> statement-breakpoint
CREATE TABLE `locations` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`code` varchar(64) NOT NULL,
	`name` varchar(120) NOT NULL,
	`archived_at` datetime,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `locations_id` PRIMARY KEY(`id`),
	CONSTRAINT `locations_code_uq` UNIQUE(`code`)
);
--> statement-breakpoint
CREATE TABLE `movements` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`kind` enum('receive','move','issue','return','adjust','scrap','condition') NOT NULL,
	`part_id` bigint unsigned NOT NULL,
	`quantity` int unsigned NOT NULL,
	`from_location_id` bigint unsigned,
	`from_condition` enum('usable','quarantine','damaged'),
	`to_location_id` bigint unsigned,
	`to_condition` enum('usable','quarantine','damaged'),
	`user_id` bigint unsigned NOT NULL,
	`issued_to` varchar(160),
	`project_id` bigint unsigned,
	`reason` varchar(200),
	`note` text,
	`refs` json,
	`at` datetime(3) NOT NULL,
	CONSTRAINT `movements_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `projects` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`code` varchar(32) NOT NULL,
	`name` varchar(160) NOT NULL,
	`owner_id` bigint unsigned,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `projects_id` PRIMARY KEY(`id`),
	CONSTRAINT `projects_code_uq` UNIQUE(`code`)
);
--> statement-breakpoint
CREATE TABLE `reservations` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`part_id` bigint unsigned NOT NULL,
	`user_id` bigint unsigned NOT NULL,
	`project_id` bigint unsigned,
	`setup_id` bigint unsigned,
	`quantity` int unsigned NOT NULL,
	`until` datetime NOT NULL,
	`status` enum('active','released','fulfilled') NOT NULL DEFAULT 'active',
	`note` text,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `reservations_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `setups` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`name` varchar(160) NOT NULL,
	`user_id` bigint unsigned NOT NULL,
	`project_id` bigint unsigned,
	`query` json NOT NULL,
	`solution` json NOT NULL,
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`updated_at` timestamp NOT NULL DEFAULT (now()) ON UPDATE CURRENT_TIMESTAMP,
	CONSTRAINT `setups_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `stock` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`part_id` bigint unsigned NOT NULL,
	`location_id` bigint unsigned NOT NULL,
	`condition` enum('usable','quarantine','damaged') NOT NULL,
	`quantity` int unsigned NOT NULL DEFAULT 0,
	CONSTRAINT `stock_id` PRIMARY KEY(`id`),
	CONSTRAINT `stock_part_loc_cond_uq` UNIQUE(`part_id`,`location_id`,`condition`)
);
--> statement-breakpoint
CREATE TABLE `stock_version` (
	`id` int NOT NULL,
	`version` bigint unsigned NOT NULL DEFAULT 0,
	CONSTRAINT `stock_version_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
ALTER TABLE `api_tokens` ADD CONSTRAINT `api_tokens_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `auth_links` ADD CONSTRAINT `auth_links_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `sessions` ADD CONSTRAINT `sessions_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `measurements` ADD CONSTRAINT `measurements_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `measurements` ADD CONSTRAINT `measurements_measured_by_users_id_fk` FOREIGN KEY (`measured_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `part_surfaces` ADD CONSTRAINT `part_surfaces_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `parts` ADD CONSTRAINT `parts_supplier_id_suppliers_id_fk` FOREIGN KEY (`supplier_id`) REFERENCES `suppliers`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `movements` ADD CONSTRAINT `movements_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `movements` ADD CONSTRAINT `movements_from_location_id_locations_id_fk` FOREIGN KEY (`from_location_id`) REFERENCES `locations`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `movements` ADD CONSTRAINT `movements_to_location_id_locations_id_fk` FOREIGN KEY (`to_location_id`) REFERENCES `locations`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `movements` ADD CONSTRAINT `movements_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `movements` ADD CONSTRAINT `movements_project_id_projects_id_fk` FOREIGN KEY (`project_id`) REFERENCES `projects`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `projects` ADD CONSTRAINT `projects_owner_id_users_id_fk` FOREIGN KEY (`owner_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `reservations` ADD CONSTRAINT `reservations_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `reservations` ADD CONSTRAINT `reservations_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `reservations` ADD CONSTRAINT `reservations_project_id_projects_id_fk` FOREIGN KEY (`project_id`) REFERENCES `projects`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `setups` ADD CONSTRAINT `setups_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `setups` ADD CONSTRAINT `setups_project_id_projects_id_fk` FOREIGN KEY (`project_id`) REFERENCES `projects`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `stock` ADD CONSTRAINT `stock_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `stock` ADD CONSTRAINT `stock_location_id_locations_id_fk` FOREIGN KEY (`location_id`) REFERENCES `locations`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `api_tokens_user_idx` ON `api_tokens` (`user_id`);--> statement-breakpoint
CREATE INDEX `audit_events_at_idx` ON `audit_events` (`at`);--> statement-breakpoint
CREATE INDEX `audit_events_actor_idx` ON `audit_events` (`actor_id`);--> statement-breakpoint
CREATE INDEX `auth_links_user_idx` ON `auth_links` (`user_id`);--> statement-breakpoint
CREATE INDEX `outbox_received_idx` ON `outbox_messages` (`received_at`);--> statement-breakpoint
CREATE INDEX `sessions_user_idx` ON `sessions` (`user_id`);--> statement-breakpoint
CREATE INDEX `signin_failures_bucket_at_idx` ON `signin_failures` (`bucket`,`at`);--> statement-breakpoint
CREATE INDEX `measurements_part_idx` ON `measurements` (`part_id`,`measured_at`);--> statement-breakpoint
CREATE INDEX `parts_kind_idx` ON `parts` (`kind`);--> statement-breakpoint
CREATE INDEX `parts_name_idx` ON `parts` (`name`);--> statement-breakpoint
CREATE INDEX `parts_efl_idx` ON `parts` (`paraxial_efl_mm`);--> statement-breakpoint
CREATE INDEX `parts_diameter_idx` ON `parts` (`diameter_mm`);--> statement-breakpoint
CREATE INDEX `parts_material_idx` ON `parts` (`primary_material`);--> statement-breakpoint
CREATE INDEX `parts_coating_idx` ON `parts` (`coating`);--> statement-breakpoint
CREATE INDEX `parts_archived_idx` ON `parts` (`archived_at`);--> statement-breakpoint
CREATE INDEX `movements_part_at_idx` ON `movements` (`part_id`,`at`);--> statement-breakpoint
CREATE INDEX `movements_at_idx` ON `movements` (`at`);--> statement-breakpoint
CREATE INDEX `reservations_part_idx` ON `reservations` (`part_id`,`status`,`until`);--> statement-breakpoint
CREATE INDEX `reservations_user_idx` ON `reservations` (`user_id`);--> statement-breakpoint
CREATE INDEX `setups_user_idx` ON `setups` (`user_id`);--> statement-breakpoint
CREATE INDEX `stock_location_idx` ON `stock` (`location_id`);