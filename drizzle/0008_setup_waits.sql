CREATE TABLE `setup_waits` (
	`id` bigint unsigned AUTO_INCREMENT NOT NULL,
	`setup_id` bigint unsigned NOT NULL,
	`open_setup_id` bigint unsigned,
	`since` datetime(3) NOT NULL,
	`ended_at` datetime(3),
	`outcome` varchar(16),
	CONSTRAINT `setup_waits_id` PRIMARY KEY(`id`),
	CONSTRAINT `setup_waits_open_uq` UNIQUE(`open_setup_id`)
);
--> statement-breakpoint
ALTER TABLE `setup_waits` ADD CONSTRAINT `setup_waits_setup_id_setups_id_fk` FOREIGN KEY (`setup_id`) REFERENCES `setups`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `setup_waits_setup_idx` ON `setup_waits` (`setup_id`);