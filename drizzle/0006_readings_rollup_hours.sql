-- Whole hours of each sensor's readings, rolled up from the hour's four quarter-hour rows,
-- so a month's chart reads 720 rows a sensor instead of 2,880 (src/domain/thinning.ts,
-- src/lib/server/db/queries/rollup.ts). Clustered like readings (WITHOUT ROWID, which Drizzle
-- cannot declare). Nothing is backfilled here: hours_rolled_ms starts empty and the roll-up
-- that runs with the server fills the hours from the quarter hours already rolled up; until
-- then charts read the quarter hours, as before.
CREATE TABLE `readings_rollup_hours` (
	`sensor_id` text NOT NULL,
	`bucket_ms` integer NOT NULL,
	`readings` integer NOT NULL,
	`lo_temp_ts` integer NOT NULL,
	`lo_temp_c` real NOT NULL,
	`lo_temp_rh_pct` real,
	`hi_temp_ts` integer NOT NULL,
	`hi_temp_c` real NOT NULL,
	`hi_temp_rh_pct` real,
	`lo_rh_ts` integer,
	`lo_rh_temp_c` real,
	`lo_rh_pct` real,
	`hi_rh_ts` integer,
	`hi_rh_temp_c` real,
	`hi_rh_pct` real,
	PRIMARY KEY(`sensor_id`, `bucket_ms`),
	FOREIGN KEY (`sensor_id`) REFERENCES `sensors`(`id`) ON UPDATE no action ON DELETE no action
) WITHOUT ROWID;
--> statement-breakpoint
ALTER TABLE `readings_rollup_marks` ADD `hours_rolled_ms` integer;