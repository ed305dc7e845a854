CREATE TABLE `pour_sensor_maturity` (
	`assignment_id` integer PRIMARY KEY NOT NULL,
	`pour_id` integer NOT NULL,
	`sensor_id` text NOT NULL,
	`datum_temp_c` real NOT NULL,
	`activation_energy_j_mol` real NOT NULL,
	`first_ts` integer,
	`last_ts` integer,
	`last_temp_c` real,
	`ttf_c_h` real DEFAULT 0 NOT NULL,
	`equivalent_age_h` real DEFAULT 0 NOT NULL,
	`complete` integer DEFAULT false NOT NULL,
	`reading_count` integer DEFAULT 0 NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`assignment_id`) REFERENCES `pour_sensors`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`pour_id`) REFERENCES `pours`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `pour_sensor_maturity_pour_idx` ON `pour_sensor_maturity` (`pour_id`);--> statement-breakpoint
CREATE INDEX `pour_sensor_maturity_sensor_idx` ON `pour_sensor_maturity` (`sensor_id`);