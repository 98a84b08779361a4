CREATE TABLE `check_events` (
	`id` text PRIMARY KEY NOT NULL,
	`organisation_id` text NOT NULL,
	`check_id` text NOT NULL,
	`element_id` text,
	`kind` text NOT NULL,
	`value` text,
	`client_time` integer NOT NULL,
	`device_id` text NOT NULL,
	`seq` integer NOT NULL,
	`received_at` integer NOT NULL,
	FOREIGN KEY (`check_id`) REFERENCES `spot_checks`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `check_events_check_idx` ON `check_events` (`check_id`);--> statement-breakpoint
CREATE TABLE `digest_sends` (
	`id` text PRIMARY KEY NOT NULL,
	`organisation_id` text NOT NULL,
	`user_id` text NOT NULL,
	`day` text NOT NULL,
	`sent_at` integer NOT NULL,
	FOREIGN KEY (`organisation_id`) REFERENCES `organisations`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `digest_sends_user_day_unique` ON `digest_sends` (`user_id`,`day`);--> statement-breakpoint
CREATE TABLE `plan_items` (
	`id` text PRIMARY KEY NOT NULL,
	`organisation_id` text NOT NULL,
	`learner_id` text NOT NULL,
	`job_id` text NOT NULL,
	`target_date` text,
	`reason` text NOT NULL,
	`note` text DEFAULT '' NOT NULL,
	`created_by` text,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`updated_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`organisation_id`) REFERENCES `organisations`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`learner_id`) REFERENCES `learners`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`job_id`) REFERENCES `jobs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE UNIQUE INDEX `plan_items_learner_job_unique` ON `plan_items` (`organisation_id`,`learner_id`,`job_id`);--> statement-breakpoint
CREATE INDEX `plan_items_job_idx` ON `plan_items` (`organisation_id`,`job_id`);--> statement-breakpoint
CREATE TABLE `spot_checks` (
	`id` text PRIMARY KEY NOT NULL,
	`organisation_id` text NOT NULL,
	`coach_user_id` text,
	`learner_id` text NOT NULL,
	`job_id` text NOT NULL,
	`version_id` text NOT NULL,
	`lesson_id` text,
	`started_at` integer NOT NULL,
	`elements` text DEFAULT '[]' NOT NULL,
	`note` text DEFAULT '' NOT NULL,
	`finished_at` integer,
	`outcome` text,
	`interval_index` integer DEFAULT 0 NOT NULL,
	`next_interval_index` integer,
	`next_due_at` integer,
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
CREATE INDEX `spot_checks_org_idx` ON `spot_checks` (`organisation_id`);--> statement-breakpoint
CREATE INDEX `spot_checks_learner_job_idx` ON `spot_checks` (`organisation_id`,`learner_id`,`job_id`);--> statement-breakpoint
CREATE TABLE `task_leases` (
	`name` text PRIMARY KEY NOT NULL,
	`holder` text NOT NULL,
	`expires_at` integer NOT NULL
);
--> statement-breakpoint
ALTER TABLE `lessons` ADD `focus` text;--> statement-breakpoint
ALTER TABLE `memberships` ADD `digest_emails` integer DEFAULT true NOT NULL;