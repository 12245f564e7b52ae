-- Session ids are stored hashed: the cookie keeps the plain id, the table its SHA-256 (hex), so signed-in sessions survive.
UPDATE `sessions` SET `id` = SHA2(`id`, 256);--> statement-breakpoint
ALTER TABLE `sessions` MODIFY COLUMN `id` char(64) NOT NULL;
