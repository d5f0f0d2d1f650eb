CREATE TABLE `run` (
	`id` int AUTO_INCREMENT NOT NULL,
	`project_id` int NOT NULL,
	`name` varchar(120) NOT NULL,
	`kind` enum('samples','iterations') NOT NULL DEFAULT 'samples',
	`created_by` varchar(32) NOT NULL,
	`digest_through_revision_id` int,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `run_id` PRIMARY KEY(`id`),
	CONSTRAINT `run_name` UNIQUE(`project_id`,`name`)
);
--> statement-breakpoint
ALTER TABLE `part` ADD `latest_revision_id` int;--> statement-breakpoint
ALTER TABLE `revision` ADD `run_id` int;--> statement-breakpoint
ALTER TABLE `revision` ADD `iteration` int;--> statement-breakpoint
ALTER TABLE `revision` ADD `meta` json;--> statement-breakpoint
ALTER TABLE `run` ADD CONSTRAINT `run_project_id_project_id_fk` FOREIGN KEY (`project_id`) REFERENCES `project`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `run` ADD CONSTRAINT `run_created_by_user_id_fk` FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `part` ADD CONSTRAINT `part_latest_revision_id_revision_id_fk` FOREIGN KEY (`latest_revision_id`) REFERENCES `revision`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `revision` ADD CONSTRAINT `revision_run_id_run_id_fk` FOREIGN KEY (`run_id`) REFERENCES `run`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `revision_run` ON `revision` (`run_id`,`id`);--> statement-breakpoint
UPDATE `part` SET `latest_revision_id` = (SELECT r.`id` FROM `revision` r WHERE r.`part_id` = `part`.`id` ORDER BY r.`number` DESC LIMIT 1);
