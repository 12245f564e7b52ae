ALTER TABLE `materials` MODIFY COLUMN `model` enum('sellmeier','cauchy','glass-code') NOT NULL;--> statement-breakpoint
ALTER TABLE `materials` MODIFY COLUMN `nd` double;--> statement-breakpoint
ALTER TABLE `materials` MODIFY COLUMN `vd` double;--> statement-breakpoint
ALTER TABLE `materials` ADD `coefficients` json;--> statement-breakpoint
ALTER TABLE `materials` ADD `min_nm` double;--> statement-breakpoint
ALTER TABLE `materials` ADD `max_nm` double;--> statement-breakpoint
ALTER TABLE `materials` ADD `source` text;--> statement-breakpoint
ALTER TABLE `materials` ADD `created_by` bigint unsigned;--> statement-breakpoint
ALTER TABLE `materials` ADD `created_at` timestamp DEFAULT (now());--> statement-breakpoint
ALTER TABLE `parts` ADD `coating_min_nm` double;--> statement-breakpoint
ALTER TABLE `parts` ADD `coating_max_nm` double;--> statement-breakpoint
ALTER TABLE `materials` ADD CONSTRAINT `materials_created_by_users_id_fk` FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
-- Hand-written: parts stored before the band was kept get it from their coating text, by the rules of
-- src/lib/coating.ts for the usual forms ("AR 430–670 nm", "AR 400-700nm": a range in nm; "V-coat 1064 nm":
-- one line, ±2 %). Other forms (µm, "to") are read when the part is next saved or imported.
UPDATE `parts` SET
	`coating_min_nm` = LEAST(
		CAST(REGEXP_REPLACE(`coating`, '^.*?([0-9]+(?:\\.[0-9]+)?)\\s*(?:nm)?\\s*[-–—]\\s*([0-9]+(?:\\.[0-9]+)?)\\s*nm.*$', '\\1') AS DOUBLE),
		CAST(REGEXP_REPLACE(`coating`, '^.*?([0-9]+(?:\\.[0-9]+)?)\\s*(?:nm)?\\s*[-–—]\\s*([0-9]+(?:\\.[0-9]+)?)\\s*nm.*$', '\\2') AS DOUBLE)),
	`coating_max_nm` = GREATEST(
		CAST(REGEXP_REPLACE(`coating`, '^.*?([0-9]+(?:\\.[0-9]+)?)\\s*(?:nm)?\\s*[-–—]\\s*([0-9]+(?:\\.[0-9]+)?)\\s*nm.*$', '\\1') AS DOUBLE),
		CAST(REGEXP_REPLACE(`coating`, '^.*?([0-9]+(?:\\.[0-9]+)?)\\s*(?:nm)?\\s*[-–—]\\s*([0-9]+(?:\\.[0-9]+)?)\\s*nm.*$', '\\2') AS DOUBLE))
WHERE `coating` REGEXP '[0-9]+(\\.[0-9]+)?\\s*(nm)?\\s*[-–—]\\s*[0-9]+(\\.[0-9]+)?\\s*nm';--> statement-breakpoint
UPDATE `parts` SET
	`coating_min_nm` = ROUND(0.98 * CAST(REGEXP_REPLACE(`coating`, '^.*?([0-9]+(?:\\.[0-9]+)?)\\s*nm.*$', '\\1') AS DOUBLE), 4),
	`coating_max_nm` = ROUND(1.02 * CAST(REGEXP_REPLACE(`coating`, '^.*?([0-9]+(?:\\.[0-9]+)?)\\s*nm.*$', '\\1') AS DOUBLE), 4)
WHERE `coating_min_nm` IS NULL AND `coating` REGEXP '[0-9]+(\\.[0-9]+)?\\s*nm';
