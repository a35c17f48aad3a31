CREATE TABLE `rollup_day_fix_kinds` (
	`shop_id` text NOT NULL,
	`day` integer NOT NULL,
	`fix_kind` text NOT NULL,
	`fixes` integer DEFAULT 0 NOT NULL,
	`powered_on` integer DEFAULT 0 NOT NULL,
	PRIMARY KEY(`shop_id`, `day`, `fix_kind`)
) WITHOUT ROWID;
--> statement-breakpoint
CREATE TABLE `rollup_day_node_fails` (
	`shop_id` text NOT NULL,
	`day` integer NOT NULL,
	`board_id` text NOT NULL,
	`node_id` text NOT NULL,
	`n` integer DEFAULT 0 NOT NULL,
	PRIMARY KEY(`shop_id`, `board_id`, `node_id`, `day`)
) WITHOUT ROWID;
--> statement-breakpoint
CREATE TABLE `rollup_day_parts` (
	`shop_id` text NOT NULL,
	`parts_used` text NOT NULL,
	`created_month` text NOT NULL,
	`map_version_id` text NOT NULL,
	`day` integer NOT NULL,
	`n` integer DEFAULT 0 NOT NULL,
	PRIMARY KEY(`shop_id`, `parts_used`, `created_month`, `map_version_id`, `day`)
) WITHOUT ROWID;
--> statement-breakpoint
CREATE TABLE `rollup_day_strategies` (
	`shop_id` text NOT NULL,
	`day` integer NOT NULL,
	`strategy` text NOT NULL,
	`reading_count` integer NOT NULL,
	`runs` integer DEFAULT 0 NOT NULL,
	`isolated` integer DEFAULT 0 NOT NULL,
	`escalated` integer DEFAULT 0 NOT NULL,
	PRIMARY KEY(`shop_id`, `day`, `strategy`, `reading_count`)
) WITHOUT ROWID;
--> statement-breakpoint
CREATE TABLE `rollup_day_version_runs` (
	`shop_id` text NOT NULL,
	`day` integer NOT NULL,
	`board_id` text NOT NULL,
	`map_version_id` text NOT NULL,
	`ended` integer DEFAULT 0 NOT NULL,
	PRIMARY KEY(`shop_id`, `board_id`, `map_version_id`, `day`)
) WITHOUT ROWID;
