import { sql } from 'drizzle-orm';
import { check, pgTable, text, timestamp, unique, uuid } from 'drizzle-orm/pg-core';

/**
 * The plant's places: site → building → area. Equipment (4/10) sits in an area. A site keeps
 * its IANA time zone: times are stored in UTC and shown in site time with the zone.
 */
export const sites = pgTable('sites', {
	id: uuid('id').primaryKey().defaultRandom(),
	code: text('code').notNull().unique(),
	name: text('name').notNull(),
	timeZone: text('time_zone').notNull(),
	createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
});

export const buildings = pgTable(
	'buildings',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		siteId: uuid('site_id')
			.notNull()
			.references(() => sites.id),
		code: text('code').notNull(),
		name: text('name').notNull(),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [unique('buildings_site_code').on(t.siteId, t.code)]
);

/** EU GMP Annex 1 cleanroom grades A–D; CNC = controlled, not classified. */
export const areaGrades = ['A', 'B', 'C', 'D', 'CNC'] as const;
export type AreaGrade = (typeof areaGrades)[number];

export const areas = pgTable(
	'areas',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		buildingId: uuid('building_id')
			.notNull()
			.references(() => buildings.id),
		code: text('code').notNull(),
		name: text('name').notNull(),
		grade: text('grade').$type<AreaGrade>().notNull(),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [
		unique('areas_building_code').on(t.buildingId, t.code),
		check('areas_grade_known', sql`${t.grade} in ('A', 'B', 'C', 'D', 'CNC')`)
	]
);
