ALTER TABLE `payments` ADD `idempotency_key` text;--> statement-breakpoint
CREATE UNIQUE INDEX `payments_shop_idempotency` ON `payments` (`shop_id`,`idempotency_key`);--> statement-breakpoint
ALTER TABLE `shops` ADD `unclaimed_days` integer DEFAULT 60 NOT NULL;