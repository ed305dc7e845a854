-- Keep readings clustered by (sensor_id, ts): a sensor's time window is then one sequential
-- range of the table itself, with no second lookup per row (Drizzle cannot declare this).
CREATE TABLE `readings_clustered` (
	`sensor_id` text NOT NULL,
	`ts` integer NOT NULL,
	`temp_c` real NOT NULL,
	`rh_pct` real,
	`source` text NOT NULL,
	`received_at` integer NOT NULL,
	PRIMARY KEY(`sensor_id`, `ts`),
	FOREIGN KEY (`sensor_id`) REFERENCES `sensors`(`id`) ON UPDATE no action ON DELETE no action
) WITHOUT ROWID;
--> statement-breakpoint
INSERT INTO `readings_clustered` (`sensor_id`, `ts`, `temp_c`, `rh_pct`, `source`, `received_at`)
  SELECT `sensor_id`, `ts`, `temp_c`, `rh_pct`, `source`, `received_at` FROM `readings`;
--> statement-breakpoint
DROP TABLE `readings`;
--> statement-breakpoint
ALTER TABLE `readings_clustered` RENAME TO `readings`;
--> statement-breakpoint
CREATE INDEX `readings_ts_idx` ON `readings` (`ts`);
