CREATE TABLE `api_tokens` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`key_hash` text NOT NULL,
	`key_prefix` text NOT NULL,
	`role` text NOT NULL,
	`created_by` integer,
	`created_at` integer NOT NULL,
	`last_used_at` integer,
	`revoked_at` integer,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `api_tokens_key_hash_unique` ON `api_tokens` (`key_hash`);--> statement-breakpoint
CREATE TABLE `gateways` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`key_hash` text NOT NULL,
	`key_prefix` text NOT NULL,
	`created_by` integer,
	`created_at` integer NOT NULL,
	`last_used_at` integer,
	`revoked_at` integer,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `gateways_name_unique` ON `gateways` (`name`);--> statement-breakpoint
CREATE UNIQUE INDEX `gateways_key_hash_unique` ON `gateways` (`key_hash`);--> statement-breakpoint
CREATE TABLE `sessions` (
	`id` text PRIMARY KEY NOT NULL,
	`user_id` integer NOT NULL,
	`expires_at_s` integer NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `sessions_user_idx` ON `sessions` (`user_id`);--> statement-breakpoint
CREATE TABLE `users` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`email` text NOT NULL,
	`name` text NOT NULL,
	`role` text NOT NULL,
	`password_hash` text NOT NULL,
	`active` integer DEFAULT true NOT NULL,
	`must_change_password` integer DEFAULT false NOT NULL,
	`phone` text,
	`units` text DEFAULT 'us' NOT NULL,
	`theme` text DEFAULT 'system' NOT NULL,
	`notify_json` text DEFAULT '{"sms":true,"email":true}' NOT NULL,
	`created_at` integer NOT NULL,
	`updated_at` integer,
	`last_sign_in_at` integer
);
--> statement-breakpoint
CREATE UNIQUE INDEX `users_email_unique` ON `users` (lower("email"));--> statement-breakpoint
CREATE TABLE `areas` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`kind` text NOT NULL,
	`description` text,
	`sort_order` integer DEFAULT 0 NOT NULL,
	`created_at` integer NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `areas_name_unique` ON `areas` (`name`);--> statement-breakpoint
CREATE TABLE `sensor_calibrations` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`sensor_id` text NOT NULL,
	`checked_at` integer NOT NULL,
	`checked_by` integer,
	`reference_temp_c` real,
	`sensor_temp_c` real,
	`temp_offset_c` real NOT NULL,
	`rh_offset_pct` real DEFAULT 0 NOT NULL,
	`next_due_at` integer,
	`note` text,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`sensor_id`) REFERENCES `sensors`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`checked_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `sensor_calibrations_sensor_idx` ON `sensor_calibrations` (`sensor_id`,`checked_at`);--> statement-breakpoint
CREATE TABLE `sensors` (
	`id` text PRIMARY KEY NOT NULL,
	`label` text,
	`kind` text,
	`area_id` integer,
	`status` text DEFAULT 'new' NOT NULL,
	`temp_offset_c` real DEFAULT 0 NOT NULL,
	`rh_offset_pct` real DEFAULT 0 NOT NULL,
	`material` text,
	`last_seen_at` integer,
	`last_temp_c` real,
	`last_rh_pct` real,
	`battery_pct` real,
	`last_gateway_id` integer,
	`created_at` integer NOT NULL,
	`retired_at` integer,
	FOREIGN KEY (`area_id`) REFERENCES `areas`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`last_gateway_id`) REFERENCES `gateways`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `sensors_area_idx` ON `sensors` (`area_id`);--> statement-breakpoint
CREATE INDEX `sensors_status_idx` ON `sensors` (`status`);--> statement-breakpoint
CREATE TABLE `settings` (
	`key` text PRIMARY KEY NOT NULL,
	`value` text NOT NULL,
	`updated_at` integer,
	`updated_by` integer,
	FOREIGN KEY (`updated_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `readings` (
	`sensor_id` text NOT NULL,
	`ts` integer NOT NULL,
	`temp_c` real NOT NULL,
	`rh_pct` real,
	`source` text NOT NULL,
	`received_at` integer NOT NULL,
	PRIMARY KEY(`sensor_id`, `ts`),
	FOREIGN KEY (`sensor_id`) REFERENCES `sensors`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `readings_ts_idx` ON `readings` (`ts`);--> statement-breakpoint
CREATE TABLE `uploads` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`kind` text NOT NULL,
	`file_name` text NOT NULL,
	`file_sha256` text NOT NULL,
	`sensor_id` text,
	`time_zone` text,
	`mapping_json` text,
	`rows_in` integer DEFAULT 0 NOT NULL,
	`rows_accepted` integer DEFAULT 0 NOT NULL,
	`rows_duplicate` integer DEFAULT 0 NOT NULL,
	`rows_rejected` integer DEFAULT 0 NOT NULL,
	`errors_json` text,
	`uploaded_by` integer,
	`gateway_id` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`sensor_id`) REFERENCES `sensors`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`uploaded_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`gateway_id`) REFERENCES `gateways`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `uploads_created_idx` ON `uploads` (`created_at`);--> statement-breakpoint
CREATE TABLE `calibration_points` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`mix_id` integer NOT NULL,
	`age_h` real,
	`ttf_c_h` real NOT NULL,
	`equivalent_age_h` real,
	`strength_mpa` real NOT NULL,
	`specimens` text,
	`broken_at` integer,
	`upload_id` integer,
	`created_by` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`mix_id`) REFERENCES `mixes`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `calibration_points_mix_idx` ON `calibration_points` (`mix_id`);--> statement-breakpoint
CREATE TABLE `cylinder_breaks` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`pour_id` integer,
	`mix_id` integer,
	`specimen_id` text,
	`broken_at` integer NOT NULL,
	`age_h` real,
	`strength_mpa` real NOT NULL,
	`estimate_mpa` real,
	`lab` text,
	`note` text,
	`entered_by` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`pour_id`) REFERENCES `pours`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`mix_id`) REFERENCES `mixes`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`entered_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `cylinder_breaks_pour_idx` ON `cylinder_breaks` (`pour_id`);--> statement-breakpoint
CREATE INDEX `cylinder_breaks_mix_idx` ON `cylinder_breaks` (`mix_id`);--> statement-breakpoint
CREATE TABLE `mix_calibrations` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`mix_id` integer NOT NULL,
	`model` text NOT NULL,
	`params_json` text NOT NULL,
	`r2` real,
	`point_count` integer NOT NULL,
	`warnings_json` text,
	`created_by` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`mix_id`) REFERENCES `mixes`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `mix_calibrations_mix_idx` ON `mix_calibrations` (`mix_id`);--> statement-breakpoint
CREATE TABLE `mixes` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`description` text,
	`design_strength_mpa` real NOT NULL,
	`strip_strength_mpa` real NOT NULL,
	`ship_strength_mpa` real NOT NULL,
	`datum_temp_c` real DEFAULT -10 NOT NULL,
	`activation_energy_j_mol` real DEFAULT 41570 NOT NULL,
	`placing_temp_min_c` real,
	`placing_temp_max_c` real,
	`cement_kg_m3` real,
	`scm_kg_m3` real,
	`water_kg_m3` real,
	`fine_agg_kg_m3` real,
	`coarse_agg_kg_m3` real,
	`fine_agg_moisture_pct` real,
	`coarse_agg_moisture_pct` real,
	`current_calibration_id` integer,
	`active` integer DEFAULT true NOT NULL,
	`created_by` integer,
	`created_at` integer NOT NULL,
	`updated_at` integer,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `mixes_name_unique` ON `mixes` (`name`);--> statement-breakpoint
CREATE TABLE `pour_products` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`pour_id` integer NOT NULL,
	`product` text NOT NULL,
	`piece_count` integer NOT NULL,
	`marks` text,
	FOREIGN KEY (`pour_id`) REFERENCES `pours`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `pour_products_pour_idx` ON `pour_products` (`pour_id`);--> statement-breakpoint
CREATE TABLE `pour_sensors` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`pour_id` integer NOT NULL,
	`sensor_id` text NOT NULL,
	`from_at` integer NOT NULL,
	`to_at` integer,
	`location` text,
	`created_by` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`pour_id`) REFERENCES `pours`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`sensor_id`) REFERENCES `sensors`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `pour_sensors_pour_idx` ON `pour_sensors` (`pour_id`);--> statement-breakpoint
CREATE INDEX `pour_sensors_sensor_idx` ON `pour_sensors` (`sensor_id`,`from_at`);--> statement-breakpoint
CREATE TABLE `pours` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`code` text NOT NULL,
	`mix_id` integer NOT NULL,
	`cast_at` integer NOT NULL,
	`status` text DEFAULT 'curing' NOT NULL,
	`bed` text,
	`discharge_temp_c` real,
	`slump_mm` real,
	`spread_mm` real,
	`air_pct` real,
	`unit_weight_kg_m3` real,
	`cylinder_ids` text,
	`notes` text,
	`stripped_at` integer,
	`shipped_at` integer,
	`created_by` integer,
	`created_at` integer NOT NULL,
	`updated_at` integer,
	FOREIGN KEY (`mix_id`) REFERENCES `mixes`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `pours_code_unique` ON `pours` (`code`);--> statement-breakpoint
CREATE INDEX `pours_status_idx` ON `pours` (`status`,`cast_at`);--> statement-breakpoint
CREATE INDEX `pours_mix_idx` ON `pours` (`mix_id`);--> statement-breakpoint
CREATE TABLE `releases` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`pour_id` integer NOT NULL,
	`kind` text NOT NULL,
	`released_by` integer NOT NULL,
	`released_at` integer NOT NULL,
	`threshold_mpa` real NOT NULL,
	`estimate_mpa` real,
	`governing_sensor_id` text,
	`ttf_c_h` real,
	`equivalent_age_h` real,
	`complete_record` integer,
	`basis_json` text,
	`override_reason` text,
	`note` text,
	`caution` text NOT NULL,
	FOREIGN KEY (`pour_id`) REFERENCES `pours`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`released_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `releases_pour_idx` ON `releases` (`pour_id`);--> statement-breakpoint
CREATE TABLE `alert_episodes` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`rule_id` integer NOT NULL,
	`sensor_id` text,
	`pour_id` integer,
	`state` text NOT NULL,
	`severity` text NOT NULL,
	`started_at` integer NOT NULL,
	`opened_at` integer NOT NULL,
	`trigger_value` real,
	`worst_value` real,
	`acknowledged_at` integer,
	`acknowledged_by` integer,
	`ack_note` text,
	`cleared_at` integer,
	`escalation_level` integer DEFAULT 0 NOT NULL,
	`last_notified_at` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`rule_id`) REFERENCES `alert_rules`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`sensor_id`) REFERENCES `sensors`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`pour_id`) REFERENCES `pours`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`acknowledged_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `alert_episodes_state_idx` ON `alert_episodes` (`state`,`opened_at`);--> statement-breakpoint
CREATE INDEX `alert_episodes_sensor_idx` ON `alert_episodes` (`sensor_id`,`opened_at`);--> statement-breakpoint
CREATE INDEX `alert_episodes_pour_idx` ON `alert_episodes` (`pour_id`);--> statement-breakpoint
CREATE TABLE `alert_rules` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`kind` text NOT NULL,
	`threshold` real,
	`threshold_high` real,
	`hold_ms` integer DEFAULT 0 NOT NULL,
	`clear_margin` real DEFAULT 0 NOT NULL,
	`severity` text DEFAULT 'warning' NOT NULL,
	`scope_area_id` integer,
	`scope_sensor_kind` text,
	`scope_sensor_id` text,
	`scope_pour_id` integer,
	`escalate_after_ms` integer,
	`enabled` integer DEFAULT true NOT NULL,
	`source` text,
	`created_by` integer,
	`created_at` integer NOT NULL,
	`updated_at` integer,
	FOREIGN KEY (`scope_area_id`) REFERENCES `areas`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`scope_sensor_id`) REFERENCES `sensors`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`scope_pour_id`) REFERENCES `pours`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `notification_outbox` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`dedupe_key` text NOT NULL,
	`channel` text NOT NULL,
	`to_address` text NOT NULL,
	`user_id` integer,
	`episode_id` integer,
	`reason` text,
	`subject` text,
	`body` text NOT NULL,
	`status` text DEFAULT 'pending' NOT NULL,
	`attempts` integer DEFAULT 0 NOT NULL,
	`next_attempt_at` integer NOT NULL,
	`last_error` text,
	`provider_id` text,
	`sent_at` integer,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`episode_id`) REFERENCES `alert_episodes`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `notification_outbox_dedupe_unique` ON `notification_outbox` (`dedupe_key`);--> statement-breakpoint
CREATE INDEX `notification_outbox_due_idx` ON `notification_outbox` (`status`,`next_attempt_at`);--> statement-breakpoint
CREATE TABLE `on_call_shifts` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`user_id` integer NOT NULL,
	`weekdays` integer DEFAULT 127 NOT NULL,
	`start_minute` integer NOT NULL,
	`end_minute` integer NOT NULL,
	`escalation_order` integer DEFAULT 0 NOT NULL,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `audit_log` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`at` integer NOT NULL,
	`actor_user_id` integer,
	`actor_label` text NOT NULL,
	`action` text NOT NULL,
	`entity_type` text,
	`entity_id` text,
	`pour_id` integer,
	`detail_json` text,
	`ip` text
);
--> statement-breakpoint
CREATE INDEX `audit_log_at_idx` ON `audit_log` (`at`);--> statement-breakpoint
CREATE INDEX `audit_log_entity_idx` ON `audit_log` (`entity_type`,`entity_id`);--> statement-breakpoint
CREATE INDEX `audit_log_pour_idx` ON `audit_log` (`pour_id`);--> statement-breakpoint
CREATE INDEX `audit_log_action_idx` ON `audit_log` (`action`,`at`);