-- Fixed 15-minute buckets of each sensor's readings holding each bucket's extreme readings,
-- so a long chart window is thinned from a few thousand rows instead of every reading
-- (src/domain/thinning.ts, src/lib/server/db/queries/rollup.ts). Clustered like readings
-- (WITHOUT ROWID, which Drizzle cannot declare).
CREATE TABLE `readings_rollup` (
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
CREATE TABLE `readings_rollup_marks` (
	`sensor_id` text PRIMARY KEY NOT NULL,
	`rolled_ms` integer NOT NULL,
	FOREIGN KEY (`sensor_id`) REFERENCES `sensors`(`id`) ON UPDATE no action ON DELETE no action
) WITHOUT ROWID;
--> statement-breakpoint
-- Roll up the readings already stored. Each sensor is marked complete up to the start of the
-- bucket of its newest reading (more may still come into that one), and never past the
-- buckets closed five minutes ago; the same rule as the roll-up that runs with the server.
INSERT INTO `readings_rollup_marks` (`sensor_id`, `rolled_ms`)
SELECT s.`id`, min(
    ((cast(strftime('%s', 'now') as integer) * 1000 - 300000) / 900000) * 900000,
    (SELECT max(r.`ts`) - ((max(r.`ts`) % 900000) + 900000) % 900000
       FROM `readings` r WHERE r.`sensor_id` = s.`id`))
FROM `sensors` s
WHERE EXISTS (SELECT 1 FROM `readings` r WHERE r.`sensor_id` = s.`id`);
--> statement-breakpoint
-- Each bucket's extremes: min() and max() give the values, then the earliest reading holding
-- each value is looked up on the (sensor_id, ts) key, so a tie always keeps the same reading.
INSERT INTO `readings_rollup`
SELECT g.`sensor_id`, g.`bucket_ms`, g.`n`,
  lt.`ts`, lt.`temp_c`, lt.`rh_pct`, ht.`ts`, ht.`temp_c`, ht.`rh_pct`,
  lh.`ts`, lh.`temp_c`, lh.`rh_pct`, hh.`ts`, hh.`temp_c`, hh.`rh_pct`
FROM (
  SELECT r.`sensor_id`, r.`ts` - ((r.`ts` % 900000) + 900000) % 900000 AS `bucket_ms`,
    count(*) AS `n`, min(r.`temp_c`) AS `lo_t`, max(r.`temp_c`) AS `hi_t`,
    min(r.`rh_pct`) AS `lo_h`, max(r.`rh_pct`) AS `hi_h`
  FROM `readings_rollup_marks` m
  JOIN `readings` r ON r.`sensor_id` = m.`sensor_id` AND r.`ts` < m.`rolled_ms`
  GROUP BY r.`sensor_id`, `bucket_ms`
) g
JOIN `readings` lt ON lt.`sensor_id` = g.`sensor_id` AND lt.`ts` = (
  SELECT min(x.`ts`) FROM `readings` x WHERE x.`sensor_id` = g.`sensor_id`
    AND x.`ts` >= g.`bucket_ms` AND x.`ts` < g.`bucket_ms` + 900000 AND x.`temp_c` = g.`lo_t`)
JOIN `readings` ht ON ht.`sensor_id` = g.`sensor_id` AND ht.`ts` = (
  SELECT min(x.`ts`) FROM `readings` x WHERE x.`sensor_id` = g.`sensor_id`
    AND x.`ts` >= g.`bucket_ms` AND x.`ts` < g.`bucket_ms` + 900000 AND x.`temp_c` = g.`hi_t`)
LEFT JOIN `readings` lh ON lh.`sensor_id` = g.`sensor_id` AND lh.`ts` = (
  SELECT min(x.`ts`) FROM `readings` x WHERE x.`sensor_id` = g.`sensor_id`
    AND x.`ts` >= g.`bucket_ms` AND x.`ts` < g.`bucket_ms` + 900000 AND x.`rh_pct` = g.`lo_h`)
LEFT JOIN `readings` hh ON hh.`sensor_id` = g.`sensor_id` AND hh.`ts` = (
  SELECT min(x.`ts`) FROM `readings` x WHERE x.`sensor_id` = g.`sensor_id`
    AND x.`ts` >= g.`bucket_ms` AND x.`ts` < g.`bucket_ms` + 900000 AND x.`rh_pct` = g.`hi_h`);
