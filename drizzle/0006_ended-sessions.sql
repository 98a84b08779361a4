CREATE TABLE `ended_sessions` (
	`session_id` text PRIMARY KEY NOT NULL,
	`expires_at` integer NOT NULL
);
--> statement-breakpoint
CREATE INDEX `ended_sessions_expires_idx` ON `ended_sessions` (`expires_at`);