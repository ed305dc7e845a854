CREATE TABLE `alert_tracks` (
	`rule_id` integer NOT NULL,
	`subject` text NOT NULL,
	`track_json` text NOT NULL,
	`updated_at` integer NOT NULL,
	PRIMARY KEY(`rule_id`, `subject`),
	FOREIGN KEY (`rule_id`) REFERENCES `alert_rules`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
ALTER TABLE `alert_episodes` ADD `ack_via` text;--> statement-breakpoint
ALTER TABLE `alert_episodes` ADD `last_value` real;--> statement-breakpoint
ALTER TABLE `alert_episodes` ADD `last_value_at` integer;--> statement-breakpoint
ALTER TABLE `alert_episodes` ADD `digested_at` integer;--> statement-breakpoint
ALTER TABLE `alert_rules` ADD `audience` text DEFAULT 'on_call' NOT NULL;--> statement-breakpoint
ALTER TABLE `on_call_shifts` ADD `name` text DEFAULT '' NOT NULL;