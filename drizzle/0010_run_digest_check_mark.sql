ALTER TABLE `run` ADD `digest_through_check_run_id` int;--> statement-breakpoint
CREATE INDEX `revision_run_check` ON `revision` (`run_id`,`latest_check_id`);--> statement-breakpoint
-- Runs digested before the mark existed: their digests covered the checks of the revisions they covered.
UPDATE `run` SET `digest_through_check_run_id` = (
	SELECT MAX(`r`.`latest_check_id`) FROM `revision` `r` WHERE `r`.`run_id` = `run`.`id` AND `r`.`id` <= `run`.`digest_through_revision_id`
) WHERE `digest_through_revision_id` IS NOT NULL;
