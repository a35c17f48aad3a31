CREATE TABLE `api_tokens` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`member_id` text NOT NULL,
	`user_id` text NOT NULL,
	`name` text NOT NULL,
	`secret_hash` blob NOT NULL,
	`last_used_at` integer,
	`revoked_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`member_id`) REFERENCES `members`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `api_tokens_member` ON `api_tokens` (`member_id`);--> statement-breakpoint
CREATE TABLE `audit_events` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`shop_id` text,
	`actor_id` text,
	`action` text NOT NULL,
	`subject` text,
	`data` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `audit_shop_at` ON `audit_events` (`shop_id`,`created_at`);--> statement-breakpoint
CREATE TABLE `boards` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`maker` text NOT NULL,
	`model` text NOT NULL,
	`board_number` text NOT NULL,
	`revision` text DEFAULT '' NOT NULL,
	`input_type` text NOT NULL,
	`input_millivolts` integer NOT NULL,
	`battery_cells` integer DEFAULT 0 NOT NULL,
	`notes` text DEFAULT '' NOT NULL,
	`archived_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `boards_shop` ON `boards` (`shop_id`);--> statement-breakpoint
CREATE INDEX `boards_shop_number` ON `boards` (`shop_id`,`board_number`);--> statement-breakpoint
CREATE TABLE `customers` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`name` text NOT NULL,
	`email` text,
	`phone` text,
	`consent_to_contact` integer DEFAULT false NOT NULL,
	`erased_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `customers_shop` ON `customers` (`shop_id`);--> statement-breakpoint
CREATE TABLE `email_tokens` (
	`id` text PRIMARY KEY NOT NULL,
	`purpose` text NOT NULL,
	`token_hash` text NOT NULL,
	`email` text NOT NULL,
	`shop_id` text,
	`role` text,
	`user_id` text,
	`created_by` text,
	`expires_at` integer NOT NULL,
	`used_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `email_tokens_token_hash_unique` ON `email_tokens` (`token_hash`);--> statement-breakpoint
CREATE INDEX `email_tokens_shop` ON `email_tokens` (`shop_id`);--> statement-breakpoint
CREATE TABLE `findings` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`run_id` text NOT NULL,
	`board_id` text NOT NULL,
	`map_version_id` text NOT NULL,
	`kind` text NOT NULL,
	`node_id` text,
	`fix_kind` text,
	`parts_used` text,
	`outcome` text,
	`round` integer DEFAULT 1 NOT NULL,
	`recorded_by` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`run_started_at` integer,
	`run_board_id` text,
	`run_version_id` text,
	`run_tech_id` text,
	`run_status` text,
	`run_outcome` text,
	`created_month` text,
	`node_first` integer DEFAULT 1 NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `findings_shop_board_node` ON `findings` (`shop_id`,`board_id`,`node_id`);--> statement-breakpoint
CREATE INDEX `findings_hot` ON `findings` (`shop_id`,`run_board_id`,`node_id`,`run_started_at`,`kind`,`run_status`,`run_tech_id`,`run_outcome`,`run_version_id`,`node_first`);--> statement-breakpoint
CREATE INDEX `findings_fix` ON `findings` (`shop_id`,`fix_kind`,`run_started_at`,`run_board_id`,`run_version_id`,`run_tech_id`,`run_outcome`,`outcome`) WHERE "findings"."fix_kind" IS NOT NULL AND "findings"."outcome" IS NOT NULL;--> statement-breakpoint
CREATE INDEX `findings_parts` ON `findings` (`shop_id`,`parts_used`,`created_month`,`run_started_at`,`run_board_id`,`run_version_id`,`run_tech_id`,`run_outcome`) WHERE "findings"."parts_used" IS NOT NULL;--> statement-breakpoint
CREATE INDEX `findings_run` ON `findings` (`run_id`,`node_id`,`kind`);--> statement-breakpoint
CREATE INDEX `findings_shop_created` ON `findings` (`shop_id`,`created_at`);--> statement-breakpoint
CREATE TABLE `invoices` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`job_id` text NOT NULL,
	`quote_id` text,
	`number` integer NOT NULL,
	`status` text DEFAULT 'open' NOT NULL,
	`currency` text NOT NULL,
	`subtotal_minor` integer NOT NULL,
	`tax_minor` integer NOT NULL,
	`total_minor` integer NOT NULL,
	`paid_minor` integer DEFAULT 0 NOT NULL,
	`refunded_minor` integer DEFAULT 0 NOT NULL,
	`paid_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`job_id`) REFERENCES `jobs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `invoices_shop_number` ON `invoices` (`shop_id`,`number`);--> statement-breakpoint
CREATE INDEX `invoices_job` ON `invoices` (`job_id`);--> statement-breakpoint
CREATE TABLE `job_events` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`shop_id` text NOT NULL,
	`job_id` text NOT NULL,
	`from_state` text,
	`to_state` text NOT NULL,
	`actor_kind` text NOT NULL,
	`actor_id` text,
	`note` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`job_id`) REFERENCES `jobs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `job_events_job` ON `job_events` (`job_id`,`created_at`);--> statement-breakpoint
CREATE TABLE `job_photos` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`job_id` text NOT NULL,
	`upload_id` text NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`job_id`) REFERENCES `jobs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`upload_id`) REFERENCES `uploads`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `job_photos_job` ON `job_photos` (`job_id`);--> statement-breakpoint
CREATE TABLE `jobs` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`number` integer NOT NULL,
	`customer_id` text,
	`board_id` text,
	`serial` text DEFAULT '' NOT NULL,
	`complaint` text DEFAULT '' NOT NULL,
	`state` text DEFAULT 'received' NOT NULL,
	`assigned_to` text,
	`details` text,
	`condition_notes` text DEFAULT '' NOT NULL,
	`accessories` text DEFAULT '' NOT NULL,
	`diagnostic_fee_minor` integer DEFAULT 0 NOT NULL,
	`terms_accepted_at` integer,
	`unclaimed_days` integer,
	`passcode_sealed` text,
	`warranty_of_job_id` text,
	`chargeable` integer DEFAULT true NOT NULL,
	`waived_by` text,
	`waived_at` integer,
	`waiver_reason` text,
	`state_changed_at` integer,
	`closed_at` integer,
	`anonymised_at` integer,
	`created_by` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`serial_jobs` integer DEFAULT 1 NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`customer_id`) REFERENCES `customers`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`board_id`) REFERENCES `boards`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `jobs_shop_number` ON `jobs` (`shop_id`,`number`);--> statement-breakpoint
CREATE INDEX `jobs_shop_state` ON `jobs` (`shop_id`,`state`);--> statement-breakpoint
CREATE INDEX `jobs_shop_serial` ON `jobs` (`shop_id`,`serial`);--> statement-breakpoint
CREATE INDEX `jobs_id_serial` ON `jobs` (`id`,`serial`,`number`);--> statement-breakpoint
CREATE INDEX `jobs_serial_repeats` ON `jobs` (`shop_id`,`serial`,`number`,`id`,`serial_jobs`) WHERE "jobs"."serial_jobs" > 1 AND "jobs"."serial" <> '';--> statement-breakpoint
CREATE TABLE `map_version_nodes` (
	`map_version_id` text NOT NULL,
	`node_id` text NOT NULL,
	`node_name` text NOT NULL,
	`kind` text NOT NULL,
	`refdes` text,
	PRIMARY KEY(`map_version_id`, `node_id`),
	FOREIGN KEY (`map_version_id`) REFERENCES `map_versions`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `map_version_nodes_name` ON `map_version_nodes` (`node_name`);--> statement-breakpoint
CREATE TABLE `map_versions` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`map_id` text NOT NULL,
	`number` integer NOT NULL,
	`document` text NOT NULL,
	`note` text DEFAULT '' NOT NULL,
	`published_by` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`map_id`) REFERENCES `maps`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `map_versions_map_number` ON `map_versions` (`map_id`,`number`);--> statement-breakpoint
CREATE TABLE `maps` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`board_id` text NOT NULL,
	`name` text NOT NULL,
	`draft` text,
	`draft_revision` integer DEFAULT 0 NOT NULL,
	`draft_updated_by` text,
	`draft_updated_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`board_id`) REFERENCES `boards`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `maps_shop_board` ON `maps` (`shop_id`,`board_id`);--> statement-breakpoint
CREATE TABLE `members` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`user_id` text NOT NULL,
	`role` text NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `members_shop_user` ON `members` (`shop_id`,`user_id`);--> statement-breakpoint
CREATE INDEX `members_user` ON `members` (`user_id`);--> statement-breakpoint
CREATE TABLE `meter_profiles` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`name` text NOT NULL,
	`profile` text NOT NULL,
	`is_default` integer DEFAULT false NOT NULL,
	`updated_by` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`updated_at` integer,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `meter_profiles_shop` ON `meter_profiles` (`shop_id`);--> statement-breakpoint
CREATE TABLE `notices` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`user_id` text NOT NULL,
	`run_id` text,
	`text` text NOT NULL,
	`read_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `notices_user_unread` ON `notices` (`shop_id`,`user_id`,`read_at`);--> statement-breakpoint
CREATE TABLE `outbox` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`to` text NOT NULL,
	`subject` text NOT NULL,
	`text` text NOT NULL,
	`html` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL
);
--> statement-breakpoint
CREATE TABLE `payments` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`invoice_id` text NOT NULL,
	`kind` text NOT NULL,
	`method` text NOT NULL,
	`status` text NOT NULL,
	`amount_minor` integer NOT NULL,
	`currency` text NOT NULL,
	`provider_session_id` text,
	`provider_payment_intent_id` text,
	`provider_refund_id` text,
	`refund_of` text,
	`note` text DEFAULT '' NOT NULL,
	`recorded_by` text,
	`settled_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`invoice_id`) REFERENCES `invoices`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `payments_invoice` ON `payments` (`invoice_id`);--> statement-breakpoint
CREATE INDEX `payments_session` ON `payments` (`provider_session_id`);--> statement-breakpoint
CREATE TABLE `quote_lines` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`quote_id` text NOT NULL,
	`position` integer NOT NULL,
	`kind` text NOT NULL,
	`description` text NOT NULL,
	`quantity` integer NOT NULL,
	`unit_minor` integer NOT NULL,
	`total_minor` integer NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`quote_id`) REFERENCES `quotes`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `quote_lines_quote` ON `quote_lines` (`quote_id`,`position`);--> statement-breakpoint
CREATE TABLE `quotes` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`job_id` text NOT NULL,
	`number` integer NOT NULL,
	`status` text DEFAULT 'draft' NOT NULL,
	`finding_id` text,
	`currency` text NOT NULL,
	`tax_rate_bp` integer NOT NULL,
	`subtotal_minor` integer NOT NULL,
	`tax_minor` integer NOT NULL,
	`total_minor` integer NOT NULL,
	`deposit_minor` integer DEFAULT 0 NOT NULL,
	`note` text DEFAULT '' NOT NULL,
	`token_hash` text,
	`expires_at` integer,
	`sent_at` integer,
	`decided_at` integer,
	`created_by` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`job_id`) REFERENCES `jobs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `quotes_token_hash_unique` ON `quotes` (`token_hash`);--> statement-breakpoint
CREATE UNIQUE INDEX `quotes_shop_number` ON `quotes` (`shop_id`,`number`);--> statement-breakpoint
CREATE INDEX `quotes_job` ON `quotes` (`job_id`);--> statement-breakpoint
CREATE TABLE `readings` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`run_id` text NOT NULL,
	`seq` integer NOT NULL,
	`net_id` text NOT NULL,
	`mode` text NOT NULL,
	`text` text NOT NULL,
	`value` text NOT NULL,
	`verdict` text NOT NULL,
	`replaces_id` text,
	`skipped` integer DEFAULT false NOT NULL,
	`note` text,
	`round` integer DEFAULT 1 NOT NULL,
	`taken_by` text NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `readings_run_seq` ON `readings` (`run_id`,`seq`);--> statement-breakpoint
CREATE INDEX `readings_shop_net` ON `readings` (`shop_id`,`net_id`);--> statement-breakpoint
CREATE INDEX `readings_run_cover` ON `readings` (`run_id`,`seq`,`created_at`,`net_id`,`skipped`,`replaces_id`);--> statement-breakpoint
CREATE TABLE `run_notes` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`run_id` text NOT NULL,
	`author_id` text NOT NULL,
	`kind` text NOT NULL,
	`text` text NOT NULL,
	`net_id` text,
	`mode` text,
	`done_reading_id` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `run_notes_run` ON `run_notes` (`run_id`,`created_at`);--> statement-breakpoint
CREATE TABLE `runs` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`board_id` text NOT NULL,
	`map_version_id` text NOT NULL,
	`job_id` text,
	`tech_id` text NOT NULL,
	`strategy` text NOT NULL,
	`condition` text NOT NULL,
	`status` text DEFAULT 'open' NOT NULL,
	`outcome` text,
	`escalated_at` integer,
	`round` integer DEFAULT 1 NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`isolated_at` integer,
	`closed_at` integer,
	`reading_count` integer DEFAULT 0 NOT NULL,
	`escalation_net_id` text,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`board_id`) REFERENCES `boards`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`map_version_id`) REFERENCES `map_versions`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`job_id`) REFERENCES `jobs`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `runs_shop_board` ON `runs` (`shop_id`,`board_id`,`created_at`);--> statement-breakpoint
CREATE INDEX `runs_version` ON `runs` (`map_version_id`);--> statement-breakpoint
CREATE INDEX `runs_job` ON `runs` (`job_id`,`created_at`,`closed_at`,`isolated_at`,`board_id`,`outcome`,`shop_id`,`map_version_id`,`tech_id`);--> statement-breakpoint
CREATE INDEX `runs_shop_started` ON `runs` (`shop_id`,`created_at`,`board_id`,`map_version_id`,`status`,`tech_id`,`outcome`,`strategy`,`isolated_at`,`escalated_at`,`job_id`,`closed_at`,`id`);--> statement-breakpoint
CREATE INDEX `runs_shop_board_version` ON `runs` (`shop_id`,`board_id`,`map_version_id`,`created_at`,`status`,`tech_id`,`outcome`);--> statement-breakpoint
CREATE INDEX `runs_strategy_readings` ON `runs` (`shop_id`,`strategy`,`reading_count`,`created_at`,`board_id`,`map_version_id`,`tech_id`,`outcome`,`isolated_at`,`escalated_at`);--> statement-breakpoint
CREATE INDEX `runs_strategy_ms` ON `runs` (`shop_id`,`strategy`,("isolated_at" - "created_at"),`created_at`,`isolated_at`,`board_id`,`map_version_id`,`tech_id`,`outcome`) WHERE "runs"."isolated_at" IS NOT NULL;--> statement-breakpoint
CREATE INDEX `runs_ms` ON `runs` (`shop_id`,("isolated_at" - "created_at"),`created_at`,`isolated_at`,`board_id`,`map_version_id`,`tech_id`,`outcome`) WHERE "runs"."isolated_at" IS NOT NULL;--> statement-breakpoint
CREATE INDEX `runs_escalated` ON `runs` (`shop_id`,`created_at`,`board_id`,`map_version_id`,`tech_id`,`outcome`,`escalation_net_id`) WHERE "runs"."escalated_at" IS NOT NULL;--> statement-breakpoint
CREATE INDEX `runs_outcome_job` ON `runs` (`shop_id`,`outcome`,`job_id`,`created_at`,`board_id`,`map_version_id`,`tech_id`) WHERE "runs"."job_id" IS NOT NULL;--> statement-breakpoint
CREATE TABLE `sessions` (
	`id` text PRIMARY KEY NOT NULL,
	`secret_hash` blob NOT NULL,
	`user_id` text NOT NULL,
	`shop_id` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`last_seen_at` integer NOT NULL,
	`expires_at` integer NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `sessions_user` ON `sessions` (`user_id`);--> statement-breakpoint
CREATE TABLE `shops` (
	`id` text PRIMARY KEY NOT NULL,
	`name` text NOT NULL,
	`currency` text DEFAULT 'USD' NOT NULL,
	`tax_rate_bp` integer DEFAULT 0 NOT NULL,
	`warranty_days` integer DEFAULT 90 NOT NULL,
	`retention_days` integer DEFAULT 730 NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL
);
--> statement-breakpoint
CREATE TABLE `sign_in_failures` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`key` text NOT NULL,
	`at` integer NOT NULL
);
--> statement-breakpoint
CREATE INDEX `sign_in_failures_key_at` ON `sign_in_failures` (`key`,`at`);--> statement-breakpoint
CREATE TABLE `uploads` (
	`id` text PRIMARY KEY NOT NULL,
	`shop_id` text NOT NULL,
	`storage_key` text NOT NULL,
	`content_type` text NOT NULL,
	`bytes` integer NOT NULL,
	`sha256` text NOT NULL,
	`purpose` text NOT NULL,
	`uploaded_by` text NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`shop_id`) REFERENCES `shops`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `uploads_shop` ON `uploads` (`shop_id`);--> statement-breakpoint
CREATE TABLE `users` (
	`id` text PRIMARY KEY NOT NULL,
	`email` text NOT NULL,
	`name` text NOT NULL,
	`password_hash` text NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `users_email_unique` ON `users` (`email`);--> statement-breakpoint
CREATE TABLE `webhook_events` (
	`id` text PRIMARY KEY NOT NULL,
	`type` text NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL
);
