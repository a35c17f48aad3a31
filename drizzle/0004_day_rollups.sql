CREATE TABLE `rollup_day_fix_kinds` (
	`shop_id` text NOT NULL,
	`day` integer NOT NULL,
	`fix_kind` text NOT NULL,
	`fixes` integer DEFAULT 0 NOT NULL,
	`powered_on` integer DEFAULT 0 NOT NULL,
	PRIMARY KEY(`shop_id`, `day`, `fix_kind`)
);
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
);
