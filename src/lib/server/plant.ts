import { asc, eq } from 'drizzle-orm';
import { db } from './db/index';
import { areas, buildings, sites } from './db/schema/index';

export type SiteSummary = { id: string; code: string; name: string; timeZone: string };

/** The site this installation serves (one per installation for now: the first by code). */
export async function currentSite(): Promise<SiteSummary | undefined> {
	const [site] = await db()
		.select({ id: sites.id, code: sites.code, name: sites.name, timeZone: sites.timeZone })
		.from(sites)
		.orderBy(asc(sites.code))
		.limit(1);
	return site;
}

/** Buildings of a site with their areas, in code order: one query. */
export async function plantTree(siteId: string) {
	const rows = await db()
		.select({
			buildingId: buildings.id,
			buildingCode: buildings.code,
			buildingName: buildings.name,
			areaCode: areas.code,
			areaName: areas.name,
			grade: areas.grade
		})
		.from(buildings)
		.leftJoin(areas, eq(areas.buildingId, buildings.id))
		.where(eq(buildings.siteId, siteId))
		.orderBy(asc(buildings.code), asc(areas.code));

	const tree = new Map<
		string,
		{ code: string; name: string; areas: { code: string; name: string; grade: string }[] }
	>();
	for (const r of rows) {
		let building = tree.get(r.buildingId);
		if (!building)
			tree.set(
				r.buildingId,
				(building = { code: r.buildingCode, name: r.buildingName, areas: [] })
			);
		if (r.areaCode && r.areaName && r.grade)
			building.areas.push({ code: r.areaCode, name: r.areaName, grade: r.grade });
	}
	return [...tree.values()];
}
