import { sql } from 'drizzle-orm';
import {
	boolean,
	check,
	date,
	doublePrecision,
	index,
	integer,
	pgTable,
	text,
	unique,
	uuid
} from 'drizzle-orm/pg-core';
import { recorded } from './columns';
import { equipment, procedures } from './master';
import { areas, sites } from './plant';

/**
 * Preventive maintenance schedules (9/10). A schedule's identity, and its versions: each change
 * (rule, target, pause) is a new version with its reason, never an update (append-only by
 * trigger, migration 0018). The target is one piece of equipment, or every piece of a class in
 * an area. The rule is a calendar interval and/or a usage limit, whichever first
 * (src/lib/calc/schedule.ts), with lead time and grace window.
 */
export const pmSchedules = pgTable('pm_schedules', {
	id: uuid('id').primaryKey(),
	siteId: uuid('site_id')
		.notNull()
		.references(() => sites.id),
	...recorded()
});

export const pmScheduleVersions = pgTable(
	'pm_schedule_versions',
	{
		id: uuid('id').primaryKey(),
		scheduleId: uuid('schedule_id')
			.notNull()
			.references(() => pmSchedules.id),
		version: integer('version').notNull(),
		title: text('title').notNull(),
		equipmentId: uuid('equipment_id').references(() => equipment.id),
		areaId: uuid('area_id').references(() => areas.id),
		equipmentClass: text('equipment_class'),
		/** The procedure; each work order pins the version effective when it is made. */
		procedureId: uuid('procedure_id')
			.notNull()
			.references(() => procedures.id),
		intervalEvery: integer('interval_every'),
		intervalUnit: text('interval_unit'),
		usageKind: text('usage_kind'),
		usageLimit: doublePrecision('usage_limit'),
		leadDays: integer('lead_days').notNull(),
		graceDays: integer('grace_days').notNull(),
		leadUsage: doublePrecision('lead_usage').notNull().default(0),
		graceUsage: doublePrecision('grace_usage').notNull().default(0),
		/** The basis before the first released work order of the schedule (site-local date). */
		startsOn: date('starts_on').notNull(),
		/** A paused schedule makes no work orders. */
		active: boolean('active').notNull(),
		reason: text('reason'),
		...recorded()
	},
	(t) => [
		unique('pm_schedule_versions_number').on(t.scheduleId, t.version),
		index('pm_schedule_versions_equipment').on(t.equipmentId),
		check(
			'pm_schedule_versions_target',
			sql`(${t.equipmentId} is not null and ${t.areaId} is null and ${t.equipmentClass} is null)
				or (${t.equipmentId} is null and ${t.areaId} is not null and ${t.equipmentClass} is not null)`
		),
		check(
			'pm_schedule_versions_interval',
			sql`(${t.intervalEvery} is null) = (${t.intervalUnit} is null)
				and (${t.intervalEvery} is null or ${t.intervalEvery} >= 1)
				and (${t.intervalUnit} is null or ${t.intervalUnit} in ('day', 'week', 'month', 'year'))`
		),
		check(
			'pm_schedule_versions_usage',
			sql`(${t.usageKind} is null) = (${t.usageLimit} is null)
				and (${t.usageLimit} is null or ${t.usageLimit} > 0)
				and (${t.usageKind} is null or ${t.usageKind} in ('sip_cycles', 'operating_hours'))`
		),
		check(
			'pm_schedule_versions_some_limit',
			sql`${t.intervalEvery} is not null or ${t.usageLimit} is not null`
		),
		check(
			'pm_schedule_versions_windows',
			sql`${t.leadDays} >= 0 and ${t.graceDays} >= 0 and ${t.leadUsage} >= 0 and ${t.graceUsage} >= 0`
		),
		check('pm_schedule_versions_reason', sql`${t.version} = 1 or ${t.reason} is not null`)
	]
);

/**
 * The Planners' daily digest of due-soon and overdue work (9/10 item 4): one row per site and
 * site-local day, written in the transaction that queues the mails, so however many schedulers
 * run, the digest of a day goes out once (the unique key decides).
 */
export const pmDigests = pgTable(
	'pm_digests',
	{
		id: uuid('id').primaryKey(),
		siteId: uuid('site_id')
			.notNull()
			.references(() => sites.id),
		day: date('day').notNull(),
		overdue: integer('overdue').notNull(),
		dueSoon: integer('due_soon').notNull(),
		recipients: integer('recipients').notNull(),
		...recorded()
	},
	(t) => [unique('pm_digests_once').on(t.siteId, t.day)]
);

/**
 * Diaphragm lives carried over from the records kept before Countersign (9/10 item 6): one row
 * per diaphragm that was fitted and removed — when, after how many SIP cycles, and whether it
 * failed or was replaced as planned (a planned replacement is a right-censored life). Lives
 * recorded in Countersign come from its own released work orders; these rows only add history.
 * Append-only.
 */
export const partLifeRecords = pgTable(
	'part_life_records',
	{
		id: uuid('id').primaryKey(),
		equipmentId: uuid('equipment_id')
			.notNull()
			.references(() => equipment.id),
		materialCode: text('material_code').notNull(),
		fittedOn: date('fitted_on').notNull(),
		removedOn: date('removed_on').notNull(),
		sipCycles: integer('sip_cycles').notNull(),
		endedBy: text('ended_by').notNull(),
		/** Where the row came from (the paper logbook and page, the old system's export). */
		source: text('source').notNull(),
		...recorded()
	},
	(t) => [
		index('part_life_records_equipment').on(t.equipmentId),
		check('part_life_records_ended_by', sql`${t.endedBy} in ('failure', 'planned')`),
		check('part_life_records_dates', sql`${t.removedOn} >= ${t.fittedOn}`),
		check('part_life_records_cycles', sql`${t.sipCycles} >= 0`)
	]
);
