import { sql } from 'drizzle-orm';
import {
	boolean,
	check,
	doublePrecision,
	index,
	integer,
	pgTable,
	text,
	timestamp,
	unique,
	uuid
} from 'drizzle-orm/pg-core';
import { recorded } from './columns';
import { equipment } from './master';
import { signatures } from './signatures';
import { sha256 } from './types';

const at = (name: string) => timestamp(name, { withTimezone: true, precision: 3 });

/**
 * API tokens for the plant's systems (9/10 item 2): created by an Administrator, shown once,
 * stored as the SHA-256 of the token (a random 256-bit secret: a fast hash is enough, nothing to
 * guess), limited to one scope, revoked by a row of its own. Append-only (migration 0019).
 */
export const apiTokens = pgTable(
	'api_tokens',
	{
		id: uuid('id').primaryKey(),
		name: text('name').notNull(),
		scope: text('scope').notNull(),
		tokenHash: sha256('token_hash').notNull().unique(),
		/** The token's first characters, to tell tokens apart in lists and the trail. */
		prefix: text('prefix').notNull(),
		...recorded()
	},
	(t) => [check('api_tokens_scope', sql`${t.scope} in ('usage', 'usage:read')`)]
);

export const apiTokenRevocations = pgTable('api_token_revocations', {
	tokenId: uuid('token_id')
		.primaryKey()
		.references(() => apiTokens.id),
	reason: text('reason').notNull(),
	...recorded()
});

/**
 * Steam-in-place cycles reported by the control system (9/10 item 2), append-only. One per
 * equipment and start time: a report sent twice is the same cycle. The temperature–pressure
 * check against saturated steam (IAPWS-IF97 region 4, src/lib/calc/steam.ts) is kept with it.
 */
export const sipCycles = pgTable(
	'sip_cycles',
	{
		id: uuid('id').primaryKey(),
		equipmentId: uuid('equipment_id')
			.notNull()
			.references(() => equipment.id),
		startedAt: at('started_at').notNull(),
		endedAt: at('ended_at').notNull(),
		count: integer('count').notNull(),
		peakTemperatureC: doublePrecision('peak_temperature_c').notNull(),
		absolutePressureBar: doublePrecision('absolute_pressure_bar').notNull(),
		holdMinutes: doublePrecision('hold_minutes').notNull(),
		/** Saturated steam's temperature at the reported pressure, and whether the peak matched it. */
		saturationTemperatureC: doublePrecision('saturation_temperature_c').notNull(),
		steamMatches: boolean('steam_matches').notNull(),
		toleranceC: doublePrecision('tolerance_c').notNull(),
		tokenId: uuid('token_id').references(() => apiTokens.id),
		...recorded()
	},
	(t) => [
		unique('sip_cycles_once').on(t.equipmentId, t.startedAt),
		index('sip_cycles_equipment').on(t.equipmentId, t.startedAt),
		check('sip_cycles_times', sql`${t.endedAt} > ${t.startedAt}`),
		check('sip_cycles_count', sql`${t.count} >= 1`)
	]
);

/**
 * A cycle whose peak temperature does not match saturated steam at its pressure is a deviation
 * (9/10 item 2): numbered DEV-<year>-<nnnn> with the work orders' deviations, raised in the same
 * transaction as the cycle, in Quality's queue until dispositioned with a Reviewed signature.
 */
export const sipDeviations = pgTable('sip_deviations', {
	id: uuid('id').primaryKey(),
	number: text('number').notNull().unique(),
	sipCycleId: uuid('sip_cycle_id')
		.notNull()
		.unique()
		.references(() => sipCycles.id),
	description: text('description').notNull(),
	...recorded()
});

export const sipDeviationDispositions = pgTable(
	'sip_deviation_dispositions',
	{
		id: uuid('id').primaryKey(),
		deviationId: uuid('deviation_id')
			.notNull()
			.unique()
			.references(() => sipDeviations.id),
		decision: text('decision').notNull(),
		text: text('text').notNull(),
		signatureId: uuid('signature_id')
			.notNull()
			.unique()
			.references(() => signatures.id),
		...recorded()
	},
	(t) => [
		check(
			'sip_deviation_dispositions_decision',
			sql`${t.decision} in ('accepted', 'corrected', 'capa')`
		)
	]
);
