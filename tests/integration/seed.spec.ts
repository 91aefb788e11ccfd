import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoPlant, seedDemoPlant } from '../../src/lib/server/db/seed';
import { isTimeZone } from '../../src/lib/time';
import { freshDatabase, type TestDatabase } from './helpers/database';

let t: TestDatabase;
beforeAll(async () => {
	t = await freshDatabase();
});
afterAll(async () => t?.drop());

describe('the demo plant seed', () => {
	it('adds one site with its buildings and areas to an empty database', async () => {
		const areaCount = demoPlant.buildings.reduce((n, b) => n + b.areas.length, 0);
		expect(await seedDemoPlant(t.owner)).toEqual({
			sites: 1,
			buildings: demoPlant.buildings.length,
			areas: areaCount
		});
		const [counts] = await t.ownerSql`
			select (select count(*)::int from sites) as sites,
			       (select count(*)::int from buildings) as buildings,
			       (select count(*)::int from areas) as areas`;
		expect(counts).toEqual({ sites: 1, buildings: 3, areas: 9 });
	});

	it('is idempotent: a second run adds nothing and changes nothing', async () => {
		const before = await t.ownerSql`select id, code, created_at from areas order by code`;
		expect(await seedDemoPlant(t.owner)).toEqual({ sites: 0, buildings: 0, areas: 0 });
		const after = await t.ownerSql`select id, code, created_at from areas order by code`;
		expect(after).toEqual(before);
	});

	it('gives the site an IANA time zone that Node’s tz data knows', async () => {
		const [site] = await t.ownerSql`select time_zone from sites`;
		expect(isTimeZone(site!.time_zone)).toBe(true);
	});

	it('only uses EU GMP Annex 1 grades A–D or CNC, enforced by the database', async () => {
		const [building] = await t.ownerSql`select id from buildings limit 1`;
		await expect(
			t.ownerSql`insert into areas (building_id, code, name, grade) values (${building!.id}, 'X', 'X', 'E')`
		).rejects.toMatchObject({ code: '23514' }); // check_violation
	});
});
