ALTER TABLE `revision` ADD `latest_check_id` int;--> statement-breakpoint
UPDATE `revision` r JOIN (SELECT `revision_id`, max(`id`) AS `id` FROM `check_run` GROUP BY `revision_id`) l ON l.`revision_id` = r.`id` SET r.`latest_check_id` = l.`id`;
