CREATE TABLE `api_token` (
	`id` int AUTO_INCREMENT NOT NULL,
	`user_id` varchar(32) NOT NULL,
	`name` varchar(80) NOT NULL,
	`prefix` varchar(12) NOT NULL,
	`token_hash` varchar(64) NOT NULL,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`last_used_at` datetime,
	`revoked_at` datetime,
	CONSTRAINT `api_token_id` PRIMARY KEY(`id`),
	CONSTRAINT `api_token_hash` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `audit_event` (
	`id` int AUTO_INCREMENT NOT NULL,
	`at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`actor_id` varchar(32),
	`entity` varchar(32) NOT NULL,
	`entity_id` varchar(64) NOT NULL,
	`action` varchar(48) NOT NULL,
	`from_state` varchar(32),
	`to_state` varchar(32),
	`detail` json,
	CONSTRAINT `audit_event_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `check_run` (
	`id` int AUTO_INCREMENT NOT NULL,
	`revision_id` int NOT NULL,
	`gate_profile_id` int NOT NULL,
	`report` longtext NOT NULL,
	`report_sha256` varchar(64) NOT NULL,
	`engine_version` varchar(32) NOT NULL,
	`faces` int NOT NULL,
	`vertices` int NOT NULL,
	`shells` int NOT NULL,
	`boundary_edges` int NOT NULL,
	`non_manifold_edges` int NOT NULL,
	`self_intersecting_pairs` int NOT NULL,
	`genus` int,
	`volume` double NOT NULL,
	`watertight` boolean NOT NULL,
	`severity` int NOT NULL,
	`failed_rules` varchar(300) NOT NULL,
	`duration_ms` int NOT NULL,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `check_run_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `comment` (
	`id` int AUTO_INCREMENT NOT NULL,
	`revision_id` int NOT NULL,
	`author_id` varchar(32) NOT NULL,
	`body` text NOT NULL,
	`point_x` double,
	`point_y` double,
	`point_z` double,
	`face` int,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `comment_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `decision` (
	`id` int AUTO_INCREMENT NOT NULL,
	`revision_id` int NOT NULL,
	`kind` enum('sign-off','return') NOT NULL,
	`by_id` varchar(32) NOT NULL,
	`reason` text,
	`file_sha256` varchar(64) NOT NULL,
	`report_sha256` varchar(64),
	`gate_profile_id` int,
	`gate_profile_version` int,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `decision_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `gate_profile` (
	`id` int AUTO_INCREMENT NOT NULL,
	`project_id` int NOT NULL,
	`version` int NOT NULL,
	`rules` json NOT NULL,
	`created_by` varchar(32),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `gate_profile_id` PRIMARY KEY(`id`),
	CONSTRAINT `gate_profile_version` UNIQUE(`project_id`,`version`)
);
--> statement-breakpoint
CREATE TABLE `job` (
	`id` int AUTO_INCREMENT NOT NULL,
	`kind` enum('check','repair') NOT NULL,
	`revision_id` int NOT NULL,
	`payload` json,
	`status` enum('queued','running','done','failed') NOT NULL DEFAULT 'queued',
	`attempts` int NOT NULL DEFAULT 0,
	`max_attempts` int NOT NULL DEFAULT 3,
	`worker_id` varchar(64),
	`lease_until` datetime(3),
	`heartbeat_at` datetime(3),
	`stage` varchar(40),
	`percent` int NOT NULL DEFAULT 0,
	`last_error` varchar(1000),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`finished_at` datetime(3),
	CONSTRAINT `job_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `mail_outbox` (
	`id` int AUTO_INCREMENT NOT NULL,
	`to_address` varchar(254) NOT NULL,
	`subject` varchar(300) NOT NULL,
	`text_body` text NOT NULL,
	`html_body` text,
	`status` enum('pending','sent','failed') NOT NULL DEFAULT 'pending',
	`attempts` int NOT NULL DEFAULT 0,
	`last_error` varchar(500),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`sent_at` datetime,
	CONSTRAINT `mail_outbox_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `part` (
	`id` int AUTO_INCREMENT NOT NULL,
	`project_id` int NOT NULL,
	`slug` varchar(64) NOT NULL,
	`name` varchar(120) NOT NULL,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `part_id` PRIMARY KEY(`id`),
	CONSTRAINT `part_slug` UNIQUE(`project_id`,`slug`)
);
--> statement-breakpoint
CREATE TABLE `project` (
	`id` int AUTO_INCREMENT NOT NULL,
	`team_id` int NOT NULL,
	`slug` varchar(64) NOT NULL,
	`name` varchar(120) NOT NULL,
	`description` text,
	`units` enum('mm','m','in') NOT NULL DEFAULT 'mm',
	`flow_x` double NOT NULL DEFAULT 1,
	`flow_y` double NOT NULL DEFAULT 0,
	`flow_z` double NOT NULL DEFAULT 0,
	`target_cell_size` double NOT NULL DEFAULT 1,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `project_id` PRIMARY KEY(`id`),
	CONSTRAINT `project_slug` UNIQUE(`slug`)
);
--> statement-breakpoint
CREATE TABLE `recipe` (
	`id` int AUTO_INCREMENT NOT NULL,
	`project_id` int NOT NULL,
	`name` varchar(120) NOT NULL,
	`steps` json NOT NULL,
	`created_by` varchar(32),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `recipe_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `revision` (
	`id` int AUTO_INCREMENT NOT NULL,
	`part_id` int NOT NULL,
	`number` int NOT NULL,
	`sha256` varchar(64) NOT NULL,
	`size` bigint NOT NULL,
	`format` varchar(16) NOT NULL,
	`file_name` varchar(255) NOT NULL,
	`uploader_id` varchar(32) NOT NULL,
	`source` enum('upload','api','repair') NOT NULL,
	`parent_revision_id` int,
	`recipe` json,
	`repair_log` json,
	`note` varchar(500),
	`status` enum('awaiting-check','checking','held','clear','repair-proposed','signed-off','returned','unreadable') NOT NULL DEFAULT 'awaiting-check',
	`status_reason` varchar(1000),
	`assignee_id` varchar(32),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`updated_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `revision_id` PRIMARY KEY(`id`),
	CONSTRAINT `revision_number` UNIQUE(`part_id`,`number`)
);
--> statement-breakpoint
CREATE TABLE `rule_result` (
	`id` int AUTO_INCREMENT NOT NULL,
	`check_run_id` int NOT NULL,
	`rule` varchar(40) NOT NULL,
	`passed` boolean NOT NULL,
	`severity` enum('blocking','warning','info') NOT NULL,
	`measured` varchar(120) NOT NULL,
	`limit_text` varchar(120) NOT NULL,
	`explanation` text NOT NULL,
	`location` json,
	CONSTRAINT `rule_result_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `session` (
	`id` varchar(255) NOT NULL,
	`user_id` varchar(32) NOT NULL,
	`expires_at` datetime NOT NULL,
	CONSTRAINT `session_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `sign_in_failure` (
	`id` int AUTO_INCREMENT NOT NULL,
	`email` varchar(254) NOT NULL,
	`address` varchar(64) NOT NULL,
	`at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `sign_in_failure_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `stored_file` (
	`sha256` varchar(64) NOT NULL,
	`size` bigint NOT NULL,
	`backend` enum('local','s3') NOT NULL,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `stored_file_sha256` PRIMARY KEY(`sha256`)
);
--> statement-breakpoint
CREATE TABLE `team` (
	`id` int AUTO_INCREMENT NOT NULL,
	`name` varchar(120) NOT NULL,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `team_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `user` (
	`id` varchar(32) NOT NULL,
	`email` varchar(254) NOT NULL,
	`name` varchar(120) NOT NULL,
	`team_id` int NOT NULL,
	`password_hash` varchar(255),
	`disabled` boolean NOT NULL DEFAULT false,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `user_id` PRIMARY KEY(`id`),
	CONSTRAINT `user_email_unique` UNIQUE(`email`)
);
--> statement-breakpoint
CREATE TABLE `user_role` (
	`user_id` varchar(32) NOT NULL,
	`role` enum('admin','engineer','designer','reviewer') NOT NULL,
	CONSTRAINT `user_role_user_id_role_pk` PRIMARY KEY(`user_id`,`role`)
);
--> statement-breakpoint
CREATE TABLE `user_token` (
	`token_hash` varchar(64) NOT NULL,
	`user_id` varchar(32) NOT NULL,
	`kind` enum('invite','reset') NOT NULL,
	`expires_at` datetime NOT NULL,
	`used_at` datetime,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `user_token_token_hash` PRIMARY KEY(`token_hash`)
);
--> statement-breakpoint
ALTER TABLE `api_token` ADD CONSTRAINT `api_token_user_id_user_id_fk` FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `audit_event` ADD CONSTRAINT `audit_event_actor_id_user_id_fk` FOREIGN KEY (`actor_id`) REFERENCES `user`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `check_run` ADD CONSTRAINT `check_run_revision_id_revision_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revision`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `check_run` ADD CONSTRAINT `check_run_gate_profile_id_gate_profile_id_fk` FOREIGN KEY (`gate_profile_id`) REFERENCES `gate_profile`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `comment` ADD CONSTRAINT `comment_revision_id_revision_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revision`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `comment` ADD CONSTRAINT `comment_author_id_user_id_fk` FOREIGN KEY (`author_id`) REFERENCES `user`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `decision` ADD CONSTRAINT `decision_revision_id_revision_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revision`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `decision` ADD CONSTRAINT `decision_by_id_user_id_fk` FOREIGN KEY (`by_id`) REFERENCES `user`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `decision` ADD CONSTRAINT `decision_gate_profile_id_gate_profile_id_fk` FOREIGN KEY (`gate_profile_id`) REFERENCES `gate_profile`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `gate_profile` ADD CONSTRAINT `gate_profile_project_id_project_id_fk` FOREIGN KEY (`project_id`) REFERENCES `project`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `gate_profile` ADD CONSTRAINT `gate_profile_created_by_user_id_fk` FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `job` ADD CONSTRAINT `job_revision_id_revision_id_fk` FOREIGN KEY (`revision_id`) REFERENCES `revision`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `part` ADD CONSTRAINT `part_project_id_project_id_fk` FOREIGN KEY (`project_id`) REFERENCES `project`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `project` ADD CONSTRAINT `project_team_id_team_id_fk` FOREIGN KEY (`team_id`) REFERENCES `team`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `recipe` ADD CONSTRAINT `recipe_project_id_project_id_fk` FOREIGN KEY (`project_id`) REFERENCES `project`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `recipe` ADD CONSTRAINT `recipe_created_by_user_id_fk` FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `revision` ADD CONSTRAINT `revision_part_id_part_id_fk` FOREIGN KEY (`part_id`) REFERENCES `part`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `revision` ADD CONSTRAINT `revision_sha256_stored_file_sha256_fk` FOREIGN KEY (`sha256`) REFERENCES `stored_file`(`sha256`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `revision` ADD CONSTRAINT `revision_uploader_id_user_id_fk` FOREIGN KEY (`uploader_id`) REFERENCES `user`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `revision` ADD CONSTRAINT `revision_assignee_id_user_id_fk` FOREIGN KEY (`assignee_id`) REFERENCES `user`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `rule_result` ADD CONSTRAINT `rule_result_check_run_id_check_run_id_fk` FOREIGN KEY (`check_run_id`) REFERENCES `check_run`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `session` ADD CONSTRAINT `session_user_id_user_id_fk` FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `user` ADD CONSTRAINT `user_team_id_team_id_fk` FOREIGN KEY (`team_id`) REFERENCES `team`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `user_role` ADD CONSTRAINT `user_role_user_id_user_id_fk` FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `user_token` ADD CONSTRAINT `user_token_user_id_user_id_fk` FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `audit_entity` ON `audit_event` (`entity`,`entity_id`,`id`);--> statement-breakpoint
CREATE INDEX `check_run_revision` ON `check_run` (`revision_id`,`id`);--> statement-breakpoint
CREATE INDEX `check_run_severity` ON `check_run` (`severity`);--> statement-breakpoint
CREATE INDEX `comment_revision` ON `comment` (`revision_id`,`id`);--> statement-breakpoint
CREATE INDEX `decision_revision` ON `decision` (`revision_id`);--> statement-breakpoint
CREATE INDEX `job_claim` ON `job` (`status`,`lease_until`,`id`);--> statement-breakpoint
CREATE INDEX `job_revision` ON `job` (`revision_id`);--> statement-breakpoint
CREATE INDEX `mail_outbox_status` ON `mail_outbox` (`status`,`id`);--> statement-breakpoint
CREATE INDEX `revision_status` ON `revision` (`status`,`created_at`);--> statement-breakpoint
CREATE INDEX `revision_assignee` ON `revision` (`assignee_id`);--> statement-breakpoint
CREATE INDEX `revision_sha` ON `revision` (`part_id`,`sha256`);--> statement-breakpoint
CREATE INDEX `rule_result_run` ON `rule_result` (`check_run_id`);--> statement-breakpoint
CREATE INDEX `rule_result_failed` ON `rule_result` (`rule`,`passed`);--> statement-breakpoint
CREATE INDEX `sign_in_failure_email` ON `sign_in_failure` (`email`,`at`);--> statement-breakpoint
CREATE INDEX `sign_in_failure_address` ON `sign_in_failure` (`address`,`at`);