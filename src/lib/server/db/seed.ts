import { and, eq } from 'drizzle-orm';
import type { PostgresJsDatabase } from 'drizzle-orm/postgres-js';
import type { Role } from '../../roles';
import { recordEvent } from '../audit/index';
import { hashPassword } from '../auth/passwords';
import * as schema from './schema/index';
import type { AreaGrade } from './schema/index';

/**
 * The demo plant: an invented fill-finish site with invented buildings and areas. Every name
 * here is made up. Idempotent: running it again adds only what is missing.
 */
export const demoPlant = {
	site: { code: 'OST', name: 'Ostmere Fill-Finish Site', timeZone: 'Europe/Berlin' },
	buildings: [
		{
			code: 'B10',
			name: 'Sterile filling',
			areas: [
				{ code: 'FIL-1', name: 'Filling suite 1', grade: 'B' },
				{ code: 'FIL-1A', name: 'Filling line 1 critical zone', grade: 'A' },
				{ code: 'CPR', name: 'Component preparation', grade: 'C' },
				{ code: 'BUF', name: 'Buffer preparation', grade: 'C' },
				{ code: 'TEC-10', name: 'Technical corridor B10', grade: 'CNC' }
			]
		},
		{
			code: 'B20',
			name: 'Bulk biologics',
			areas: [
				{ code: 'FER', name: 'Fermentation hall', grade: 'D' },
				{ code: 'PUR', name: 'Purification suite', grade: 'C' }
			]
		},
		{
			code: 'B30',
			name: 'Clean utilities',
			areas: [
				{ code: 'WFI', name: 'Water-for-injection generation', grade: 'CNC' },
				{ code: 'CST', name: 'Clean steam plant', grade: 'CNC' }
			]
		}
	]
} satisfies {
	site: { code: string; name: string; timeZone: string };
	buildings: {
		code: string;
		name: string;
		areas: { code: string; name: string; grade: AreaGrade }[];
	}[];
};

export type SeedResult = { sites: number; buildings: number; areas: number };

/** Adds the demo plant where it is missing; returns how many rows it added. */
export async function seedDemoPlant(db: PostgresJsDatabase<typeof schema>): Promise<SeedResult> {
	return db.transaction(async (tx) => {
		const added: SeedResult = { sites: 0, buildings: 0, areas: 0 };
		const { site: s } = demoPlant;
		let [site] = await tx.select().from(schema.sites).where(eq(schema.sites.code, s.code));
		if (!site) {
			[site] = await tx.insert(schema.sites).values(s).returning();
			added.sites++;
		}
		for (const b of demoPlant.buildings) {
			const where = and(eq(schema.buildings.siteId, site!.id), eq(schema.buildings.code, b.code));
			let [building] = await tx.select().from(schema.buildings).where(where);
			if (!building) {
				[building] = await tx
					.insert(schema.buildings)
					.values({ siteId: site!.id, code: b.code, name: b.name })
					.returning();
				added.buildings++;
			}
			const inserted = await tx
				.insert(schema.areas)
				.values(b.areas.map((a) => ({ ...a, buildingId: building!.id })))
				.onConflictDoNothing({ target: [schema.areas.buildingId, schema.areas.code] })
				.returning({ id: schema.areas.id });
			added.areas += inserted.length;
		}
		return added;
	});
}

/**
 * Demo accounts, one per role (two technicians, so that one can verify the other's step). The
 * password is for the demo only and is printed in the README; invented people.
 */
export const DEMO_PASSWORD = 'lantern-harbour-orbit';
export const demoAccounts: { username: string; fullName: string; email: string; roles: Role[] }[] =
	[
		{
			username: 'tech1',
			fullName: 'Tomas Verhoek',
			email: 'tech1@ostmere.example',
			roles: ['technician']
		},
		{
			username: 'tech2',
			fullName: 'Ines Calloway',
			email: 'tech2@ostmere.example',
			roles: ['technician']
		},
		{
			username: 'planner',
			fullName: 'Priya Lindqvist',
			email: 'planner@ostmere.example',
			roles: ['planner']
		},
		{
			username: 'quality',
			fullName: 'Quentin Aldous',
			email: 'quality@ostmere.example',
			roles: ['quality']
		},
		{
			username: 'inspector',
			fullName: 'Iris Moravec',
			email: 'inspector@ostmere.example',
			roles: ['inspector']
		},
		{
			username: 'admin',
			fullName: 'Adaeze Runström',
			email: 'admin@ostmere.example',
			roles: ['administrator']
		}
	];

/** Adds the demo accounts that are missing, each with its audit event; returns how many it added. */
export async function seedDemoAccounts(db: PostgresJsDatabase<typeof schema>): Promise<number> {
	const passwordHash = await hashPassword(DEMO_PASSWORD);
	return db.transaction(async (tx) => {
		let added = 0;
		for (const account of demoAccounts) {
			const [row] = await tx
				.insert(schema.accounts)
				.values({ ...account, passwordHash })
				.onConflictDoNothing({ target: schema.accounts.username })
				.returning({ id: schema.accounts.id });
			if (!row) continue;
			added++;
			await recordEvent(tx, {
				actor: { kind: 'system', name: 'system: demo seed' },
				action: 'account.create',
				entityType: 'account',
				entityId: row.id,
				newValues: {
					username: account.username,
					fullName: account.fullName,
					email: account.email,
					roles: account.roles
				},
				reason: 'demo data'
			});
		}
		return added;
	});
}
