CREATE TABLE `datasheets` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`part_id` bigint unsigned NOT NULL,
	`s3_key` varchar(200) NOT NULL,
	`thumbnail_key` varchar(200),
	`thumbnail_width` int,
	`thumbnail_height` int,
	`filename` varchar(255) NOT NULL,
	`content_type` enum('application/pdf','image/png','image/jpeg','image/webp') NOT NULL,
	`size_bytes` int unsigned NOT NULL,
	`sha256` char(64) NOT NULL,
	`uploaded_by` bigint unsigned NOT NULL,
	`uploaded_at` timestamp NOT NULL DEFAULT (now()),
	CONSTRAINT `datasheets_id` PRIMARY KEY(`id`),
	CONSTRAINT `datasheets_s3_key_uq` UNIQUE(`s3_key`)
);
--> statement-breakpoint
CREATE TABLE `import_row_errors` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`import_id` bigint unsigned NOT NULL,
	`row` int unsigned NOT NULL,
	`column` varchar(120) NOT NULL,
	`value` varchar(300),
	`message` varchar(300) NOT NULL,
	CONSTRAINT `import_row_errors_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `imports` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`user_id` bigint unsigned NOT NULL,
	`filename` varchar(255) NOT NULL,
	`s3_key` varchar(200) NOT NULL,
	`size_bytes` int unsigned NOT NULL,
	`sha256` char(64) NOT NULL,
	`delimiter` varchar(1) NOT NULL,
	`header` json NOT NULL,
	`supplier_id` bigint unsigned,
	`mapping` json,
	`units` json,
	`options` json,
	`status` enum('uploaded','checking','checked','committing','committed','failed') NOT NULL DEFAULT 'uploaded',
	`rows_total` int unsigned,
	`rows_done` int unsigned NOT NULL DEFAULT 0,
	`created` int unsigned NOT NULL DEFAULT 0,
	`updated` int unsigned NOT NULL DEFAULT 0,
	`unchanged` int unsigned NOT NULL DEFAULT 0,
	`rejected` int unsigned NOT NULL DEFAULT 0,
	`error_count` int unsigned NOT NULL DEFAULT 0,
	`message` varchar(500),
	`created_at` timestamp NOT NULL DEFAULT (now()),
	`checked_at` datetime,
	`committed_at` datetime,
	`heartbeat_at` datetime(3),
	CONSTRAINT `imports_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
ALTER TABLE `datasheets` ADD CONSTRAINT `datasheets_part_id_parts_id_fk` FOREIGN KEY (`part_id`) REFERENCES `parts`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `datasheets` ADD CONSTRAINT `datasheets_uploaded_by_users_id_fk` FOREIGN KEY (`uploaded_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `import_row_errors` ADD CONSTRAINT `import_row_errors_import_id_imports_id_fk` FOREIGN KEY (`import_id`) REFERENCES `imports`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `imports` ADD CONSTRAINT `imports_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `imports` ADD CONSTRAINT `imports_supplier_id_suppliers_id_fk` FOREIGN KEY (`supplier_id`) REFERENCES `suppliers`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `datasheets_part_idx` ON `datasheets` (`part_id`,`uploaded_at`);--> statement-breakpoint
CREATE INDEX `import_row_errors_import_row_idx` ON `import_row_errors` (`import_id`,`row`);--> statement-breakpoint
CREATE INDEX `imports_created_idx` ON `imports` (`created_at`);--> statement-breakpoint
CREATE INDEX `imports_user_idx` ON `imports` (`user_id`);