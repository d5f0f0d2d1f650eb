ALTER TABLE `part` ADD `latest_status` enum('awaiting-check','checking','held','clear','repair-proposed','signed-off','returned','unreadable','check-incomplete');--> statement-breakpoint
ALTER TABLE `revision` ADD `deviation` double;--> statement-breakpoint
CREATE INDEX `check_run_queue` ON `check_run` (`id`,`severity`,`failed_rules`,`thinnest_wall_cells`,`narrowest_gap_cells`);--> statement-breakpoint
CREATE INDEX `part_latest_count` ON `part` (`project_id`,`latest_status`,`latest_revision_id`);--> statement-breakpoint
CREATE INDEX `part_latest_order` ON `part` (`latest_revision_id`,`latest_status`,`project_id`);--> statement-breakpoint
CREATE INDEX `part_latest_state_order` ON `part` (`latest_status`,`latest_revision_id`,`project_id`);--> statement-breakpoint
CREATE INDEX `revision_part_status` ON `revision` (`part_id`,`status`);--> statement-breakpoint
CREATE INDEX `revision_status_deviation` ON `revision` (`status`,`deviation`);--> statement-breakpoint
UPDATE `part` SET `latest_status` = (SELECT r.`status` FROM `revision` r WHERE r.`id` = `part`.`latest_revision_id`);--> statement-breakpoint
UPDATE `revision` SET `deviation` = JSON_VALUE(`repair_log`, '$.measures.deviation') WHERE `source` = 'repair' AND JSON_VALUE(`repair_log`, '$.measures.deviation') IS NOT NULL;
