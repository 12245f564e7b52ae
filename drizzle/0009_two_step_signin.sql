ALTER TABLE `sessions` ADD `second_factor_at` datetime;--> statement-breakpoint
ALTER TABLE `users` ADD `totp_secret` varchar(255);--> statement-breakpoint
ALTER TABLE `users` ADD `totp_enabled_at` datetime;--> statement-breakpoint
ALTER TABLE `users` ADD `totp_last_step` bigint;--> statement-breakpoint
ALTER TABLE `users` ADD `totp_pending_secret` varchar(255);