import fontkit from '@pdf-lib/fontkit';
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { PDFDocument, rgb, type PDFFont, type PDFImage, type PDFPage } from 'pdf-lib';
import QRCode from 'qrcode';
import {
	attributeLabels,
	attributeText,
	equipmentClassLabels,
	orderedAttributes,
	type EquipmentClass
} from '$lib/equipment';
import { hazardLabels, limitsText, type Hazard } from '$lib/schemas/procedure';
import { signatureMeaningLabels, type SignatureMeaning } from '$lib/signature-meanings';
import { formatInZone } from '$lib/time';
import { valueText, workStatusLabels, type EntryRow } from '$lib/work';

/**
 * The maintenance record as a PDF (7/10): a complete true copy of a work order — plant,
 * equipment, procedure version, the safety notice and cautions, every step with its values,
 * units, limits and results, corrections with the replaced value and reason, photos in place
 * with their hash, deviations and dispositions, the signature manifest, the record's audit
 * events, and a verification block (record hash, latest audit seq and hash, QR code). Noto Sans
 * is embedded (latin, latin-ext and greek subsets); every page names the record, the time it
 * was made and "page x of y".
 */
export type RecordInput = {
	site: { name: string; code: string; timeZone: string };
	wo: {
		id: string;
		number: string;
		kind: string;
		procedureCode: string;
		procedureVersion: number;
		createdBy: string;
		createdAt: Date | string;
	};
	status: keyof typeof workStatusLabels;
	content: {
		title: string;
		steps: {
			key: string;
			title: string;
			instruction: string;
			cautions: { hazard: string; text: string }[];
			verificationRequired: boolean;
			fields: Parameters<typeof valueText>[0] extends infer F
				? (F & { key: string; label: string; required: boolean })[]
				: never;
		}[];
	};
	steps: { step: { key: string }; position: number; status: { state: string } }[];
	entries: EntryRow[];
	signoffs: {
		stepKey: string;
		kind: string;
		signatureId: string | null;
		reason: string | null;
		recordedByName: string;
		recordedAt: string;
	}[];
	deviations: {
		id: string;
		number: string;
		stepKey: string;
		fieldKey: string;
		entryId: string;
		description: string;
		raisedBy: string;
		raisedAt: Date | string;
		decision: string | null;
		dispositionText: string | null;
		dispositionedBy: string | null;
		dispositionedAt: Date | string | null;
	}[];
	photos: {
		id: string;
		stepKey: string | null;
		fieldKey: string | null;
		deviationId: string | null;
		sha256: string;
		width: number;
		height: number;
		recordedByName: string;
		recordedAt: string;
		voidReason: string | null;
	}[];
	equipment: {
		tag: string;
		description: string;
		equipmentClass: string;
		attributes: Record<string, unknown>;
	};
	signatures: {
		id: string;
		meaning: string;
		signerName: string;
		signedAt: Date | string;
		contentHash: string;
		matches: boolean;
	}[];
	trail: {
		seq: number;
		at: Date | string;
		actorName: string;
		action: string;
		reason: string | null;
		hash: string;
	}[];
};

export type RenderOptions = {
	generatedAt: Date;
	recordHash: string;
	chainHead: { seq: number; hash: string };
	verifyUrl: string;
	/** Thumbnails by evidence id (JPEG bytes), drawn in place. */
	thumbs: Map<string, Uint8Array>;
	/** A print made after the released original: marked as a copy on every page. */
	copy: boolean;
	/** A released record: the release event's RFC 9162 inclusion proof against a checkpoint (8/10). */
	inclusion?: {
		seq: number;
		eventHash: string;
		treeSize: number;
		rootHash: string;
		path: string[];
	};
};

const require = createRequire(import.meta.url);
const fontFile = (name: string) =>
	readFileSync(require.resolve(`@fontsource/noto-sans/files/noto-sans-${name}.woff`));

const A4 = { width: 595.28, height: 841.89 };
const MARGIN = 48;
const FOOT = 36;
const INK = rgb(0.106, 0.133, 0.188);
const MUTED = rgb(0.3, 0.333, 0.4);
const STOP = rgb(0.608, 0.11, 0.133);
const RULE = rgb(0.84, 0.83, 0.78);

type Fonts = { regular: PDFFont[]; bold: PDFFont[] };

/**
 * Characters the shipped Noto Sans subsets lack, written the way a typewriter would (subscript
 * digits, the root sign, arrows). Anything else missing draws as "?", never as an empty box.
 */
const SPELLED: Record<string, string> = {
	'₀': '0',
	'₁': '1',
	'₂': '2',
	'√': 'sqrt',
	'→': '->',
	'≥': '>=',
	'≤': '<=',
	'✓': 'done:'
};
export const pdfText = (text: string) =>
	[...text.replace(/\s+/g, ' ')].map((c) => SPELLED[c] ?? c).join('');

/** Splits text into runs each drawn with the first subset that has every glyph; others become "?". */
const charSets = new WeakMap<PDFFont, Set<number>>();
const charSet = (f: PDFFont) => {
	let set = charSets.get(f);
	if (!set) charSets.set(f, (set = new Set(f.getCharacterSet())));
	return set;
};

function runs(text: string, fonts: PDFFont[]) {
	const sets = fonts.map(charSet);
	const out: { font: PDFFont; text: string }[] = [];
	for (const ch of pdfText(text)) {
		const code = ch.codePointAt(0)!;
		let i = sets.findIndex((s) => s.has(code));
		let c = ch;
		if (i < 0) {
			c = '?';
			i = 0;
		}
		const last = out.at(-1);
		if (last && last.font === fonts[i]) last.text += c;
		else out.push({ font: fonts[i]!, text: c });
	}
	return out;
}

class Layout {
	page!: PDFPage;
	y = 0;
	readonly pages: PDFPage[] = [];
	constructor(
		readonly doc: PDFDocument,
		readonly fonts: Fonts
	) {
		this.newPage();
	}
	newPage() {
		this.page = this.doc.addPage([A4.width, A4.height]);
		this.pages.push(this.page);
		this.y = A4.height - MARGIN;
	}
	need(height: number) {
		if (this.y - height < MARGIN + FOOT) this.newPage();
	}
	width(text: string, size: number, bold = false) {
		return runs(text, bold ? this.fonts.bold : this.fonts.regular).reduce(
			(w, r) => w + r.font.widthOfTextAtSize(r.text, size),
			0
		);
	}
	/** Wraps text to the width, returns its lines (each word measured once). */
	wrap(text: string, size: number, maxWidth: number, bold = false) {
		const lines: string[] = [];
		const space = this.width(' ', size, bold);
		for (const paragraph of text.split('\n')) {
			let line = '';
			let width = 0;
			for (const word of paragraph.split(' ')) {
				const w = this.width(word, size, bold);
				if (!line || width + space + w <= maxWidth) {
					width = line ? width + space + w : w;
					line = line ? `${line} ${word}` : word;
				} else {
					lines.push(line);
					line = word;
					width = w;
				}
			}
			lines.push(line);
		}
		return lines;
	}
	drawLine(text: string, x: number, y: number, size: number, bold = false, color = INK) {
		let at = x;
		for (const r of runs(text, bold ? this.fonts.bold : this.fonts.regular)) {
			this.page.drawText(r.text, { x: at, y, size, font: r.font, color });
			at += r.font.widthOfTextAtSize(r.text, size);
		}
	}
	text(
		text: string,
		o: { size?: number; bold?: boolean; color?: typeof INK; indent?: number; gap?: number } = {}
	) {
		const size = o.size ?? 9.5;
		const x = MARGIN + (o.indent ?? 0);
		const lines = this.wrap(text, size, A4.width - MARGIN - x, o.bold);
		for (const line of lines) {
			this.need(size * 1.35);
			this.y -= size * 1.35;
			this.drawLine(line, x, this.y, size, o.bold, o.color);
		}
		this.y -= o.gap ?? 2;
	}
	/** A label in a left column and its text beside it. */
	pair(label: string, value: string, o: { indent?: number; color?: typeof INK } = {}) {
		const size = 9.5;
		const x = MARGIN + (o.indent ?? 0);
		const col = 150;
		const labelLines = this.wrap(label, size, col - 8, true);
		const valueLines = this.wrap(value || '—', size, A4.width - MARGIN - x - col);
		const n = Math.max(labelLines.length, valueLines.length);
		this.need(n * size * 1.35);
		for (let i = 0; i < n; i++) {
			this.y -= size * 1.35;
			if (labelLines[i]) this.drawLine(labelLines[i]!, x, this.y, size, true, MUTED);
			if (valueLines[i]) this.drawLine(valueLines[i]!, x + col, this.y, size, false, o.color);
		}
		this.y -= 2;
	}
	heading(text: string, size = 13) {
		this.need(size * 2.4);
		this.y -= size * 0.8;
		this.text(text, { size, bold: true, gap: 4 });
	}
	rule() {
		this.need(8);
		this.y -= 4;
		this.page.drawLine({
			start: { x: MARGIN, y: this.y },
			end: { x: A4.width - MARGIN, y: this.y },
			thickness: 0.6,
			color: RULE
		});
		this.y -= 4;
	}
	image(img: PDFImage, maxWidth: number, maxHeight: number, indent = 0) {
		const scale = Math.min(maxWidth / img.width, maxHeight / img.height, 1);
		const w = img.width * scale;
		const h = img.height * scale;
		this.need(h + 4);
		this.y -= h;
		this.page.drawImage(img, { x: MARGIN + indent, y: this.y, width: w, height: h });
		this.y -= 4;
	}
}

const SAFETY =
	'Safety first: site procedures govern. Countersign records the work; it does not replace site procedures, the manufacturer’s instructions or local codes.';

export async function renderRecordPdf(r: RecordInput, o: RenderOptions): Promise<Uint8Array> {
	const doc = await PDFDocument.create();
	doc.registerFontkit(fontkit);
	const embed = (name: string) => doc.embedFont(fontFile(name), { subset: true });
	// The subsets the record needs: latin always; latin-ext and greek only when some text has them.
	const all = JSON.stringify(r);
	const subsets = [
		'latin',
		...(/[\u0100-\u024f\u1e00-\u1eff]/.test(all) ? ['latin-ext'] : []),
		...(/[\u0370-\u03ff]/.test(all) ? ['greek'] : [])
	];
	const fonts: Fonts = { regular: [], bold: [] };
	for (const subset of subsets) {
		fonts.regular.push(await embed(`${subset}-400-normal`));
		fonts.bold.push(await embed(`${subset}-700-normal`));
	}
	const title = `Maintenance record ${r.wo.number}`;
	doc.setTitle(title);
	doc.setSubject(`${r.equipment.tag} · ${r.wo.procedureCode} version ${r.wo.procedureVersion}`);
	doc.setCreator('Countersign');
	doc.setProducer('Countersign (pdf-lib)');
	doc.setCreationDate(o.generatedAt);
	doc.setModificationDate(o.generatedAt);

	const tz = r.site.timeZone;
	const when = (d: Date | string | null) =>
		d ? formatInZone(new Date(d), tz, { seconds: true }) : '';
	const L = new Layout(doc, fonts);
	const sigById = new Map(r.signatures.map((s) => [s.id, s]));
	const meaning = (m: string) => signatureMeaningLabels[m as SignatureMeaning] ?? m;

	L.text(r.site.name, { size: 10, color: MUTED, gap: 0 });
	L.text(title, { size: 18, bold: true, gap: 2 });
	L.text(
		`${workStatusLabels[r.status]} · ${r.equipment.tag} · ${r.wo.procedureCode} version ${r.wo.procedureVersion}${o.copy ? ' · COPY of the released record' : ''}`,
		{ size: 11, bold: true, color: o.copy ? STOP : INK, gap: 6 }
	);
	L.text(SAFETY, { size: 9, color: MUTED, gap: 6 });

	L.heading('Equipment');
	L.pair('Tag', r.equipment.tag);
	L.pair('Description', r.equipment.description);
	L.pair(
		'Class',
		equipmentClassLabels[r.equipment.equipmentClass as EquipmentClass] ?? r.equipment.equipmentClass
	);
	for (const [k, v] of orderedAttributes(r.equipment.attributes))
		L.pair(attributeLabels[k] ?? k, attributeText(k, v));

	L.heading('Procedure and work order');
	L.pair('Procedure', `${r.wo.procedureCode} version ${r.wo.procedureVersion}: ${r.content.title}`);
	L.pair(
		'Work order',
		`${r.wo.number} (${r.wo.kind}), planned by ${r.wo.createdBy} ${when(r.wo.createdAt)}`
	);

	const corrected = new Set(r.entries.map((e) => e.corrects).filter(Boolean));
	for (const step of r.content.steps) {
		const pos = r.steps.find((s) => s.step.key === step.key);
		L.rule();
		L.heading(`${pos?.position ?? ''}. ${step.title}`, 11.5);
		L.text(
			`State: ${pos?.status.state ?? ''}${step.verificationRequired ? ' · second-person verification required' : ''}`,
			{ size: 9, color: MUTED }
		);
		for (const c of step.cautions)
			L.text(
				`Caution, ${(hazardLabels[c.hazard as Hazard] ?? c.hazard).toLowerCase()}: ${c.text}`,
				{
					size: 9,
					color: STOP
				}
			);
		L.text(step.instruction, { size: 9 });
		for (const f of step.fields) {
			const mine = r.entries.filter((e) => e.stepKey === step.key && e.fieldKey === f.key);
			const inForce = mine.filter((e) => !corrected.has(e.id));
			const limits = limitsText(f as never);
			if (!mine.length) {
				L.pair(f.label, f.required ? 'Not entered' : 'Not entered (optional)', { indent: 8 });
				continue;
			}
			for (const e of inForce) {
				const result =
					e.withinLimits === true
						? ' · within limits'
						: e.withinLimits === false
							? ' · OUTSIDE LIMITS'
							: '';
				L.pair(f.label, `${valueText(f, e.value)}${limits ? ` (limits ${limits})` : ''}${result}`, {
					indent: 8,
					color: e.withinLimits === false ? STOP : INK
				});
				L.text(
					`performed ${when(e.performedAt)} · recorded ${when(e.recordedAt)} by ${e.recordedByName}${e.lateReason ? ` · late entry: ${e.lateReason}` : ''}${e.reason ? ` · corrected: ${e.reason}` : ''}`,
					{ size: 8, color: MUTED, indent: 158 }
				);
				if ('photo' in e.value) {
					const img = o.thumbs.get(e.value.photo.evidenceId);
					if (img) L.image(await doc.embedJpg(img), 160, 120, 158);
				}
			}
			for (const old of mine.filter((e) => corrected.has(e.id)))
				L.text(
					`Replaced: ${valueText(f, old.value)} (recorded ${when(old.recordedAt)} by ${old.recordedByName})`,
					{
						size: 8,
						color: MUTED,
						indent: 158
					}
				);
		}
		for (const p of r.photos.filter((x) => x.stepKey === step.key && !x.fieldKey)) {
			const img = o.thumbs.get(p.id);
			L.text(
				`Photo${p.deviationId ? ` for deviation ${r.deviations.find((d) => d.id === p.deviationId)?.number ?? ''}` : ''}, ${p.width} × ${p.height} px, attached ${when(p.recordedAt)} by ${p.recordedByName}${p.voidReason ? ` · VOIDED: ${p.voidReason}` : ''}`,
				{ size: 8.5, indent: 8, color: p.voidReason ? STOP : INK }
			);
			if (img) L.image(await doc.embedJpg(img), 160, 120, 8);
			L.text(`SHA-256 ${p.sha256}`, { size: 7.5, color: MUTED, indent: 8 });
		}
		for (const so of r.signoffs.filter((x) => x.stepKey === step.key)) {
			const sig = so.signatureId ? sigById.get(so.signatureId) : undefined;
			L.text(
				sig
					? `Signed ${meaning(sig.meaning)} by ${sig.signerName}, ${when(sig.signedAt)}`
					: `Returned by ${so.recordedByName}, ${when(so.recordedAt)}: ${so.reason ?? ''}`,
				{ size: 9, bold: true, indent: 8 }
			);
		}
	}

	L.rule();
	L.heading('Deviations');
	if (!r.deviations.length) L.text('None raised.');
	for (const d of r.deviations) {
		L.text(`${d.number} · step ${d.stepKey}, field ${d.fieldKey}`, { bold: true });
		L.text(`Raised ${when(d.raisedAt)} by ${d.raisedBy}: ${d.description}`, { indent: 8 });
		L.text(
			d.decision
				? `Disposition (${d.decision}) by ${d.dispositionedBy} ${when(d.dispositionedAt)}: ${d.dispositionText ?? ''}`
				: 'Not yet dispositioned.',
			{ indent: 8, color: d.decision ? INK : STOP }
		);
	}

	L.heading('Signature manifest');
	for (const s of r.signatures)
		L.text(
			`${s.signerName} · ${meaning(s.meaning)} · ${when(s.signedAt)} · ${s.matches ? 'matches its content' : 'DOES NOT MATCH its content'}`,
			{ size: 9, color: s.matches ? INK : STOP }
		);

	L.heading('Audit events of this record');
	for (const e of r.trail)
		L.text(
			`#${e.seq} ${when(e.at)} · ${e.actorName} · ${e.action}${e.reason ? ` · reason: ${e.reason}` : ''}`,
			{ size: 7.5 }
		);

	L.heading('Verification');
	L.pair('Record content hash', o.recordHash);
	L.pair('Latest audit event', `#${o.chainHead.seq}, hash ${o.chainHead.hash}`);
	if (o.inclusion) {
		const p = o.inclusion;
		L.pair('Release event', `#${p.seq}, hash ${p.eventHash}`);
		L.pair('Checkpoint', `${p.treeSize} events, Merkle root ${p.rootHash} (RFC 9162)`);
		L.text(
			`Inclusion proof of the release event in the checkpoint (${p.path.length} hashes, leaf first; checked with scripts/verify-export.mjs --inclusion):`,
			{ size: 8, color: MUTED, gap: 0 }
		);
		p.path.forEach((h, i) => L.text(h, { size: 7, gap: i === p.path.length - 1 ? 4 : 0 }));
	}
	L.text('Verify at (or scan the code):', { size: 9.5, bold: true, color: MUTED, gap: 0 });
	L.text(o.verifyUrl, { size: 7.5, gap: 4 });
	const qr = await QRCode.toBuffer(o.verifyUrl, { type: 'png', margin: 1, width: 240 });
	L.image(await doc.embedPng(qr), 110, 110);

	// Every page: the record, when this copy was made, page x of y.
	const total = L.pages.length;
	L.pages.forEach((page, i) => {
		const line = `${r.wo.number} · ${o.copy ? 'copy ' : ''}generated ${when(o.generatedAt)} · page ${i + 1} of ${total}`;
		L.page = page;
		L.drawLine(line, MARGIN, FOOT - 12, 8, false, MUTED);
	});
	return doc.save();
}
