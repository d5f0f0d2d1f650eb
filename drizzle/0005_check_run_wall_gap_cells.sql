ALTER TABLE `check_run` ADD `thinnest_wall_cells` double;--> statement-breakpoint
ALTER TABLE `check_run` ADD `narrowest_gap_cells` double;--> statement-breakpoint
UPDATE `check_run` SET `thinnest_wall_cells` = JSON_VALUE(`report`, '$.cellSizeChecks.thinnestWall.cells'), `narrowest_gap_cells` = JSON_VALUE(`report`, '$.cellSizeChecks.narrowestGap.cells');
