CREATE TABLE `change_feed` (
	`seq` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`organisation_id` text NOT NULL,
	`entity` text NOT NULL,
	`entity_id` text NOT NULL
);
--> statement-breakpoint
CREATE INDEX `change_feed_org_seq_idx` ON `change_feed` (`organisation_id`,`seq`);--> statement-breakpoint
CREATE TABLE `lesson_events` (
	`id` text PRIMARY KEY NOT NULL,
	`organisation_id` text NOT NULL,
	`lesson_id` text NOT NULL,
	`pass` text NOT NULL,
	`element_id` text,
	`kind` text NOT NULL,
	`value` text,
	`client_time` integer NOT NULL,
	`device_id` text NOT NULL,
	`seq` integer NOT NULL,
	`received_at` integer NOT NULL,
	FOREIGN KEY (`lesson_id`) REFERENCES `lessons`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `lesson_events_lesson_idx` ON `lesson_events` (`lesson_id`);--> statement-breakpoint
CREATE TABLE `lesson_scores` (
	`lesson_id` text PRIMARY KEY NOT NULL,
	`organisation_id` text NOT NULL,
	`t1` real,
	`t2` real,
	`t3` real,
	`t4` real,
	`order_score` real,
	`recall` real,
	`readiness` text NOT NULL,
	`represent` text NOT NULL,
	`event_count` integer NOT NULL,
	`computed_at` integer NOT NULL,
	FOREIGN KEY (`lesson_id`) REFERENCES `lessons`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `lesson_scores_org_idx` ON `lesson_scores` (`organisation_id`);--> statement-breakpoint
CREATE TABLE `lessons` (
	`id` text PRIMARY KEY NOT NULL,
	`organisation_id` text NOT NULL,
	`coach_user_id` text,
	`learner_id` text NOT NULL,
	`job_id` text NOT NULL,
	`version_id` text NOT NULL,
	`place` text DEFAULT '' NOT NULL,
	`started_at` integer NOT NULL,
	`prepare` text DEFAULT '{}' NOT NULL,
	`helper` text DEFAULT '' NOT NULL,
	`decision` text,
	`acknowledgement` text,
	`signed_off_at` integer,
	`stage_seconds` text DEFAULT '{}' NOT NULL,
	`client_updated_at` integer NOT NULL,
	`updated_by_device` text NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`organisation_id`) REFERENCES `organisations`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`coach_user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`learner_id`) REFERENCES `learners`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`job_id`) REFERENCES `jobs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`version_id`) REFERENCES `breakdown_versions`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `lessons_org_idx` ON `lessons` (`organisation_id`);--> statement-breakpoint
CREATE INDEX `lessons_learner_idx` ON `lessons` (`organisation_id`,`learner_id`);