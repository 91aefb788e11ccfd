import { execFileSync } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemoMasterData } from '../../src/lib/server/db/demo/index';
import { seedDemoWork } from '../../src/lib/server/db/demo/work';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import { recordPdf } from '../../src/lib/server/pdf/index';
import { pdfText } from '../../src/lib/server/pdf/record';
import { attributeLabels, attributeText, orderedAttributes } from '../../src/lib/equipment';
import { currentSite } from '../../src/lib/server/plant';
import { signatureMeaningLabels, type SignatureMeaning } from '../../src/lib/signature-meanings';
import { formatInZone } from '../../src/lib/time';
import * as work from '../../src/lib/server/work-orders';
import { valueText } from '../../src/lib/work';
import { appDatabase } from './helpers/app-database';

// The PDF maintenance record (issue 7/10 item 3; REQUIREMENTS ES1, RP1), checked from outside
// with poppler-utils (pdftotext, pdffonts, pdfinfo, pdftoppm) against what the database holds
// for the released demo work order. Real PostgreSQL and the S3 fake.
let t: Awaited<ReturnType<typeof appDatabase>>;
let file: string;
let text: string;
let found: NonNullable<Awaited<ReturnType<typeof work.getWorkOrder>>>;
let timeZone: string;

const flat = (s: string) => s.replace(/\s+/g, ' ');

beforeAll(async () => {
	t = await appDatabase();
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	await seedDemoMasterData(DEMO_PASSWORD);
	await seedDemoWork(DEMO_PASSWORD);
	const site = (await currentSite())!;
	timeZone = site.timeZone;
	const list = await work.listWorkOrders(site.id);
	const released = list.find((w) => w.tag === 'XV-4205')!;
	found = (await work.getWorkOrder(released.id))!;
	expect(found.status).toBe('released');
	const pdf = (await recordPdf(released.id, { origin: 'http://127.0.0.1:3000', printedBy: null }))!;
	const dir = join(tmpdir(), `countersign-pdf-${process.pid}`);
	mkdirSync(dir, { recursive: true });
	file = join(dir, 'record.pdf');
	writeFileSync(file, pdf.bytes);
	text = flat(execFileSync('pdftotext', ['-enc', 'UTF-8', file, '-'], { encoding: 'utf8' }));
}, 120_000);
afterAll(async () => t?.drop());

describe('the PDF of the released demo work order', () => {
	it('holds every value in force with its unit, as the database has it', () => {
		const corrected = new Set(found.entries.map((e) => e.corrects).filter(Boolean));
		let n = 0;
		for (const step of found.content.steps)
			for (const f of step.fields)
				for (const e of found.entries.filter(
					(x) => x.stepKey === step.key && x.fieldKey === f.key && !corrected.has(x.id)
				)) {
					expect(text, `${step.key}/${f.key}`).toContain(flat(pdfText(valueText(f, e.value))));
					n++;
				}
		expect(n).toBeGreaterThan(20);
		// No glyph is missing: nothing drew as "?".
		expect(text.replace('/verify?record=', '/verify')).not.toContain('?');
	});

	it('names the equipment and each item of its data by its label, with the value as stored', () => {
		expect(text).toContain(`Tag ${found.equipment.tag}`);
		for (const [k, v] of orderedAttributes(found.equipment.attributes)) {
			expect(attributeLabels[k], k).toBeDefined();
			expect(text).toContain(flat(pdfText(`${attributeLabels[k]} ${attributeText(k, v)}`)));
		}
	});

	it('shows the corrected value as replaced, with the reason', () => {
		expect(text).toContain('Replaced: 18 °C');
		expect(text).toContain('Typing error at entry: the gauge read 28 °C.');
	});

	it('names every signer with the meaning and the time with its zone (ES1)', () => {
		expect(found.signatures.length).toBeGreaterThan(10);
		for (const s of found.signatures) {
			const line = `${s.signerName} · ${signatureMeaningLabels[s.meaning as SignatureMeaning]} · ${formatInZone(new Date(s.signedAt), timeZone, { seconds: true })}`;
			expect(text).toContain(line);
		}
	});

	it('lists the record’s audit events and a verification block with the record hash and the chain head', () => {
		for (const e of found.trail) expect(text).toContain(`#${e.seq} `);
		expect(text).toContain(work.recordContentHash(found));
		expect(text).toMatch(/Latest audit event #\d+, hash [0-9a-f]{64}/);
		expect(text).toContain(`http://127.0.0.1:3000/verify?record=${work.recordContentHash(found)}`);
		expect(text).toContain('Safety first: site procedures govern.');
	});

	it('embeds Noto Sans, and every page says “page x of y” with y the page count', () => {
		const fonts = execFileSync('pdffonts', [file], { encoding: 'utf8' });
		const rows = fonts.split('\n').slice(2).filter(Boolean);
		expect(rows.length).toBeGreaterThan(0);
		for (const row of rows) {
			expect(row).toMatch(/NotoSans/);
			expect(row).toMatch(/\byes\b/); // embedded
		}
		const info = execFileSync('pdfinfo', [file], { encoding: 'utf8' });
		const pages = Number(/Pages:\s+(\d+)/.exec(info)![1]);
		expect(pages).toBeGreaterThan(1);
		for (let i = 1; i <= pages; i++) expect(text).toContain(`page ${i} of ${pages}`);
	});

	it('renders its first page to PNG (looked at: test-results/screens/record-pdf-page1.png)', () => {
		const out = join(process.cwd(), 'test-results', 'screens');
		mkdirSync(out, { recursive: true });
		execFileSync('pdftoppm', [
			'-png',
			'-r',
			'80',
			'-f',
			'1',
			'-l',
			'1',
			'-singlefile',
			file,
			join(out, 'record-pdf-page1')
		]);
		execFileSync('pdftoppm', [
			'-png',
			'-r',
			'80',
			'-f',
			'2',
			'-l',
			'2',
			'-singlefile',
			file,
			join(out, 'record-pdf-page2')
		]);
	});
});
