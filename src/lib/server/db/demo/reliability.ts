import { count } from 'drizzle-orm';
import { addDays, siteToday } from '../../../fitness';
import * as equipment from '../../equipment';
import { currentSite } from '../../plant';
import { recordPartLife, type PartLifeInput } from '../../reliability';
import type { Recorder } from '../../records';
import { db } from '../index';
import { partLifeRecords } from '../schema/index';

/**
 * Demo diaphragm history (9/10 item 6): lives carried over from the invented plant's paper
 * logbooks and its old spreadsheet, for the Diaphragm life page. Invented data, for the demo only.
 *
 * Each diaphragm valve's history runs back from the day its present diaphragm was fitted (so
 * that the diaphragm in service has about the SIP cycles of the valve's demo counter) towards
 * early 2021. Each life is the earlier of a failure time and a planned replacement, drawn with
 * a fixed seed (so every seed gives the same lives, relative to the day of seeding):
 * - failure times in SIP cycles from Weibull distributions — invented for the demo:
 *   EPDM (DM-EPDM-70) β = 3.0, η = 190 cycles (wear-out); PTFE faced (DM-PTFE-2P) β = 1.4,
 *   η = 420 cycles (more spread out);
 * - planned replacements at 0.5–1.25 η (the old practice: at a shutdown, when convenient);
 * - days from the cycles at each valve's invented rate of SIP cycles per day (±15 % per life).
 * Idempotent: nothing is added when any carried-over life exists.
 */
const seeder: Recorder = { kind: 'system', name: 'demo seed' };

/** Invented for the demo. */
export const demoLaws: Record<string, { beta: number; eta: number }> = {
	'DM-EPDM-70': { beta: 3.0, eta: 190 },
	'DM-PTFE-2P': { beta: 1.4, eta: 420 }
};

/** The demo valves (src/lib/server/db/demo/index.ts), their diaphragm material and invented SIP rate. */
const demoValves: { tag: string; material: string; cyclesPerDay: number; book: string }[] = [
	{ tag: 'XV-3101', material: 'DM-EPDM-70', cyclesPerDay: 0.55, book: 'WFI-1' },
	{ tag: 'XV-3102', material: 'DM-EPDM-70', cyclesPerDay: 0.55, book: 'WFI-1' },
	{ tag: 'XV-3103', material: 'DM-EPDM-70', cyclesPerDay: 0.7, book: 'WFI-1' },
	{ tag: 'XV-3104', material: 'DM-EPDM-70', cyclesPerDay: 0.7, book: 'WFI-1' },
	{ tag: 'XV-3105', material: 'DM-EPDM-70', cyclesPerDay: 0.45, book: 'WFI-2' },
	{ tag: 'XV-3106', material: 'DM-PTFE-2P', cyclesPerDay: 0.8, book: 'WFI-2' },
	{ tag: 'XV-3107', material: 'DM-PTFE-2P', cyclesPerDay: 0.6, book: 'WFI-2' },
	{ tag: 'XV-3108', material: 'DM-EPDM-70', cyclesPerDay: 0.5, book: 'WFI-2' },
	{ tag: 'XV-4201', material: 'DM-PTFE-2P', cyclesPerDay: 0.4, book: 'BUF-1' },
	{ tag: 'XV-4202', material: 'DM-PTFE-2P', cyclesPerDay: 0.4, book: 'BUF-1' },
	{ tag: 'XV-4203', material: 'DM-PTFE-2P', cyclesPerDay: 0.35, book: 'BUF-1' },
	{ tag: 'XV-4204', material: 'DM-PTFE-2P', cyclesPerDay: 0.45, book: 'BUF-1' },
	{ tag: 'XV-4205', material: 'DM-EPDM-70', cyclesPerDay: 0.4, book: 'BUF-2' },
	{ tag: 'XV-4206', material: 'DM-EPDM-70', cyclesPerDay: 0.4, book: 'BUF-2' }
];

/** mulberry32: a small seeded generator (common practice, no source), uniform in (0, 1). */
function generator(seed: number) {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return (((t ^ (t >>> 14)) >>> 0) + 1) / 4294967297;
	};
}

export type DemoLife = Omit<PartLifeInput, 'equipmentId'> & { tag: string };

/**
 * The demo lives, relative to `today` (YYYY-MM-DD): the same every time for the same day. The
 * demo counter of each valve (index.ts: 20 + (loop number mod 7) × 9 cycles at go-live) sets how
 * long ago its present diaphragm was fitted.
 */
export function demoLives(today: string): DemoLife[] {
	const random = generator(2); // the seed chosen for lives that give each group a usable fit
	const earliest = addDays(today, -2150); // early 2021 for a seed late in 2026
	const lives: DemoLife[] = [];
	const pages = new Map<string, number>();
	for (const v of demoValves) {
		const law = demoLaws[v.material]!;
		const counter = 20 + (Number(v.tag.slice(-2)) % 7) * 9;
		let removedOn = addDays(today, -Math.round(counter / v.cyclesPerDay));
		const own: DemoLife[] = [];
		for (let i = 0; i < 3; i++) {
			const failure = law.eta * (-Math.log(random())) ** (1 / law.beta);
			const planned = law.eta * (0.5 + 0.75 * random());
			const cycles = Math.max(4, Math.round(Math.min(failure, planned)));
			const days = Math.max(2, Math.round(cycles / (v.cyclesPerDay * (0.85 + 0.3 * random()))));
			const fittedOn = addDays(removedOn, -days);
			if (fittedOn < earliest) break;
			own.unshift({
				tag: v.tag,
				materialCode: v.material,
				fittedOn,
				removedOn,
				sipCycles: cycles,
				endedBy: failure < planned ? 'failure' : 'planned',
				source: ''
			});
			removedOn = fittedOn;
		}
		for (const life of own) {
			// Paper logbooks up to 2023, the old spreadsheet after (invented names).
			const page = (pages.get(v.book) ?? 3) + 1 + Math.floor(random() * 6);
			pages.set(v.book, page);
			life.source =
				life.removedOn < addDays(today, -1060)
					? `Paper logbook ${v.book}, p. ${page}`
					: `Maintenance spreadsheet export, sheet ${v.book}, row ${page * 3}`;
		}
		lives.push(...own);
	}
	return lives;
}

export async function seedDemoReliability() {
	const [existing] = await db().select({ n: count() }).from(partLifeRecords);
	if ((existing?.n ?? 0) > 0) return { diaphragmLives: 0 };
	const site = await currentSite();
	if (!site) throw new Error('the demo site is missing: seed the plant first');
	const lives = demoLives(siteToday(site.timeZone));
	const ids = new Map<string, string>();
	for (const { tag, ...life } of lives) {
		const id = ids.get(tag) ?? (await equipment.findByTag(tag));
		if (!id) throw new Error(`demo equipment ${tag} is missing: seed the master data first`);
		ids.set(tag, id);
		await recordPartLife(seeder, { equipmentId: id, ...life });
	}
	return { diaphragmLives: lives.length };
}
