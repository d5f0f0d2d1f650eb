ALTER TABLE `check_run` ADD `wetted_area` double;--> statement-breakpoint
ALTER TABLE `check_run` ADD `frontal_area` double;--> statement-breakpoint
ALTER TABLE `check_run` ADD `shortest_edge_cells` double;--> statement-breakpoint
ALTER TABLE `check_run` ADD `iteration_hausdorff` double;--> statement-breakpoint
ALTER TABLE `check_run` ADD `iteration_chamfer` double;--> statement-breakpoint
ALTER TABLE `check_run` ADD `previous_iteration` int;--> statement-breakpoint
UPDATE `check_run` SET
	`wetted_area` = NULLIF(JSON_VALUE(`report`, '$.wettedArea'), 'null'),
	`frontal_area` = NULLIF(JSON_VALUE(`report`, '$.projectedArea.flow.area'), 'null'),
	`shortest_edge_cells` = NULLIF(JSON_VALUE(`report`, '$.minEdgeLength'), 'null') / NULLIF(NULLIF(JSON_VALUE(`report`, '$.cellSizeChecks.cellSize'), 'null'), 0),
	`iteration_hausdorff` = NULLIF(JSON_VALUE(`report`, '$.iterationDistance.hausdorff'), 'null'),
	`iteration_chamfer` = NULLIF(JSON_VALUE(`report`, '$.iterationDistance.chamfer'), 'null'),
	`previous_iteration` = NULLIF(JSON_VALUE(`report`, '$.iterationDistance.previousIteration'), 'null');
