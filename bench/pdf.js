// bench/pdf: the render time and size of the PDF maintenance record (issue 7/10) for a record of
// 30 steps (3 values each, one corrected per step) with 10 photos in place, made in memory (no
// database, no object store): what one render costs on this machine. Target: under 1 s.
// Run: npm run bench -- pdf
import { ensureDependencies } from '../scripts/ensure-deps.js';

ensureDependencies({ quiet: true });
const { registerKitAliases } = await import('../scripts/lib/register-kit-aliases.js');
registerKitAliases();
const { tsImport } = await import('tsx/esm/api');
const { performance } = await import('node:perf_hooks');
const { default: sharp } = await import('sharp');
/** @type {typeof import('../src/lib/server/pdf/record.ts')} */
const { renderRecordPdf } = await tsImport('../src/lib/server/pdf/record.ts', import.meta.url);

const at = new Date('2026-12-01T09:00:00Z').toISOString();
const person = 'Bench Technician';
const field = (/** @type {number} */ i) => ({
	key: `v${i}`,
	label: `Measured value ${i}`,
	kind: 'number',
	required: true,
	unit: 'mm',
	decimals: 2,
	limitType: 'range',
	min: 1,
	max: 9,
	target: null,
	tolerance: null,
	hint: '',
	options: [],
	instrumentKind: '',
	calculation: null,
	inputs: [],
	pattern: 'full'
});
const steps = Array.from({ length: 30 }, (_, s) => ({
	key: `s${s + 1}`,
	title: `Step ${s + 1} of the bench record`,
	instruction: 'Do the work as the procedure says and record what you measure. '.repeat(3),
	cautions: s % 5 === 0 ? [{ hazard: 'pressure', text: 'Line under pressure: drain first.' }] : [],
	verificationRequired: s % 3 === 0,
	fields: [field(1), field(2), field(3)]
}));
/** @type {any[]} */
const entries = [];
let seq = 1;
for (const st of steps)
	for (const f of st.fields) {
		const id = `${st.key}-${f.key}`;
		const base = {
			stepKey: st.key,
			fieldKey: f.key,
			performedAt: at,
			lateReason: null,
			recordedBy: null,
			recordedByName: person,
			recordedAt: at
		};
		if (f.key === 'v1') {
			entries.push({
				...base,
				id: `${id}-old`,
				value: { number: 3.3, unit: 'mm' },
				withinLimits: true,
				corrects: null,
				reason: null,
				auditSeq: seq++
			});
			entries.push({
				...base,
				id,
				value: { number: 3.4, unit: 'mm' },
				withinLimits: true,
				corrects: `${id}-old`,
				reason: 'Typing error',
				auditSeq: seq++
			});
		} else
			entries.push({
				...base,
				id,
				value: { number: 4.56, unit: 'mm' },
				withinLimits: true,
				corrects: null,
				reason: null,
				auditSeq: seq++
			});
	}
const thumbs = new Map();
const photos = [];
for (let i = 0; i < 10; i++) {
	const id = `photo-${i}`;
	thumbs.set(
		id,
		await sharp({
			create: {
				width: 480,
				height: 360,
				channels: 3,
				background: { r: 30 + i * 20, g: 90, b: 120 }
			}
		})
			.jpeg({ quality: 80 })
			.toBuffer()
	);
	photos.push({
		id,
		stepKey: `s${i * 3 + 1}`,
		fieldKey: null,
		deviationId: null,
		sha256: 'ab'.repeat(32),
		width: 4000,
		height: 3000,
		recordedByName: person,
		recordedAt: at,
		voidReason: null
	});
}
const input = {
	site: { name: 'Bench Site', code: 'BENCH', timeZone: 'Europe/Berlin' },
	wo: {
		id: 'bench',
		number: 'WO-2026-9999',
		kind: 'preventive',
		procedureCode: 'BENCH-01',
		procedureVersion: 1,
		createdBy: person,
		createdAt: at
	},
	status: 'released',
	content: { title: 'Bench procedure', steps },
	steps: steps.map((s, i) => ({
		step: { key: s.key },
		position: i + 1,
		status: { state: 'verified' }
	})),
	entries,
	signoffs: steps.map((s) => ({
		stepKey: s.key,
		kind: 'performed',
		signatureId: `sig-${s.key}`,
		reason: null,
		recordedByName: person,
		recordedAt: at
	})),
	deviations: [],
	photos,
	equipment: {
		tag: 'XV-9999',
		description: 'Bench valve',
		equipmentClass: 'diaphragm_valve',
		attributes: { nominalSize: 'DN 25', bonnetFasteners: 4 }
	},
	signatures: steps.map((s) => ({
		id: `sig-${s.key}`,
		meaning: 'performed',
		signerName: person,
		signedAt: at,
		contentHash: 'cd'.repeat(32),
		matches: true
	})),
	trail: Array.from({ length: 200 }, (_, i) => ({
		seq: i + 1,
		at,
		actorName: person,
		action: 'work_order.entry',
		reason: null,
		hash: 'ef'.repeat(32)
	}))
};
const options = () => ({
	generatedAt: new Date(),
	recordHash: '12'.repeat(32),
	chainHead: { seq: 200, hash: '34'.repeat(32) },
	verifyUrl: `http://127.0.0.1:3000/verify?record=${'12'.repeat(32)}`,
	thumbs,
	copy: false
});

await renderRecordPdf(/** @type {any} */ (input), options()); // warm-up (fonts, JIT)
const times = [];
let size = 0;
for (let i = 0; i < 7; i++) {
	const t0 = performance.now();
	const bytes = await renderRecordPdf(/** @type {any} */ (input), options());
	times.push(performance.now() - t0);
	size = bytes.length;
}
times.sort((a, b) => a - b);
const ms = (/** @type {number | undefined} */ t) => (t ?? 0).toFixed(0);
console.log('PDF record: 30 steps × 3 values (30 corrected), 10 photos, 200 audit events');
console.log(
	`  render: median ${ms(times[3])} ms, best ${ms(times[0])} ms, worst ${ms(times[6])} ms (7 runs, target < 1000 ms)`
);
console.log(`  size:   ${(size / 1024).toFixed(0)} KB`);
