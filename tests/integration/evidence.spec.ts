import { PutObjectCommand } from '@aws-sdk/client-s3';
import { crc32, deflateSync } from 'node:zlib';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addDays } from '../../src/lib/fitness';
import { verifyChain } from '../../src/lib/server/audit/verify';
import type { User } from '../../src/lib/server/auth/guard';
import * as equipment from '../../src/lib/server/equipment';
import {
	attachPhoto,
	originalKey,
	photoBytes,
	sha256Hex,
	sniff,
	voidPhoto
} from '../../src/lib/server/evidence';
import * as procedures from '../../src/lib/server/procedures';
import { personOf } from '../../src/lib/server/records';
import { contentHash } from '../../src/lib/server/signatures/index';
import { STEP_RECORD, stepSignedContent } from '../../src/lib/work';
import { bucket, s3 } from '../../src/lib/server/storage';
import * as work from '../../src/lib/server/work-orders';
import type { appDatabase } from './helpers/app-database';
import { stepActions, workDatabase } from './helpers/work';

// Photo evidence (issue 7/10 item 2; REQUIREMENTS DI2, AT1): checked by content, stored unchanged
// under its SHA-256 in the S3 fake (over HTTP), recorded append-only, served with its hash checked,
// voided with a reason. Real PostgreSQL, the S3 fake that scripts/test.js starts.
let t: Awaited<ReturnType<typeof appDatabase>>;
let today: string;
const people: Record<string, User> = {};
const ip = '198.51.100.70';
let goodValues: () => Promise<Record<string, Record<string, string>>>;
let id: string;

const { view, stepSeen, save, perform } = stepActions(people, ip);
const refusal = (p: Promise<unknown>) =>
	p.then(
		() => {
			throw new Error('expected a refusal');
		},
		(e: unknown) => e as Error & { status?: number; fields?: Record<string, string> }
	);
const rows = async () => {
	const [r] = await t.ownerSql`select
		(select count(*)::int from evidence where work_order_id = ${id}) as evidence,
		(select count(*)::int from evidence_voids) as voids,
		(select count(*)::int from step_entries where work_order_id = ${id}) as entries`;
	return r;
};

/** A PNG that says it is w × h pixels: signature, IHDR (with its CRC) and an empty IDAT (PNG spec). */
function pngHeader(w: number, h: number) {
	const chunk = (type: string, data: Buffer) => {
		const head = Buffer.alloc(4);
		head.writeUInt32BE(data.length);
		const body = Buffer.concat([Buffer.from(type, 'ascii'), data]);
		const crc = Buffer.alloc(4);
		crc.writeUInt32BE(crc32(body));
		return Buffer.concat([head, body, crc]);
	};
	const ihdr = Buffer.alloc(13);
	ihdr.writeUInt32BE(w, 0);
	ihdr.writeUInt32BE(h, 4);
	ihdr.set([8, 2, 0, 0, 0], 8); // 8-bit RGB
	return Buffer.concat([
		Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
		chunk('IHDR', ihdr),
		chunk('IDAT', deflateSync(Buffer.alloc(0))),
		chunk('IEND', Buffer.alloc(0))
	]);
}

let jpeg: Buffer;
beforeAll(async () => {
	const w = await workDatabase(['MP-DV-01']);
	({ t, today, goodValues } = w);
	Object.assign(people, w.people);
	jpeg = await sharp({
		create: { width: 800, height: 600, channels: 3, background: { r: 40, g: 90, b: 120 } }
	})
		.jpeg({ quality: 85 })
		.toBuffer();
	({ id } = await work.createWorkOrder(personOf(people.planner!), {
		kind: 'corrective',
		equipmentId: (await equipment.findByTag('XV-3104'))!,
		procedureId: (await procedures.findProcedureByCode('MP-DV-01'))!,
		dueOn: addDays(today, 3),
		priority: 'routine',
		assignees: [people.tech1!.id],
		notes: ''
	}));
	await work.startWorkOrder(people.tech1!, id, (await view(id)).revision, ip);
});
afterAll(async () => t?.drop());

const attach = async (
	bytes: Uint8Array,
	place: { field?: string } = {},
	reason = '',
	who = 'tech1'
) =>
	attachPhoto(
		people[who]!,
		id,
		{ stepKey: 'as-found', fieldKey: place.field ?? null },
		bytes,
		{ seen: await stepSeen(id, 'as-found'), reason },
		ip
	);

describe('hostile uploads are refused with a clear message; nothing is stored', () => {
	const cases: [string, () => Uint8Array, RegExp, number][] = [
		[
			'a shell script renamed .jpg',
			() => Buffer.from('#!/bin/sh\necho pwned\n'),
			/not a JPEG, PNG or WebP photo/,
			400
		],
		[
			'an SVG',
			() => Buffer.from('<svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>'),
			/not a JPEG, PNG or WebP photo/,
			400
		],
		[
			'a truncated JPEG',
			() => jpeg.subarray(0, Math.floor(jpeg.length / 2)),
			/damaged or incomplete/,
			400
		],
		['a 0-byte file', () => new Uint8Array(), /The file is empty/, 400],
		[
			'a 16 MB file',
			() => {
				const b = Buffer.alloc(16 * 1024 * 1024);
				jpeg.copy(b);
				return b;
			},
			/larger than 15 MB/,
			413
		],
		['a 20000 × 20000 PNG', () => pngHeader(20000, 20000), /400 megapixels; at most 40/, 400]
	];
	for (const [what, bytes, message, status] of cases)
		it(`${what} → ${status}`, async () => {
			const before = await rows();
			const e = await refusal(attach(bytes()));
			expect(e.status).toBe(status);
			expect(e.message).toMatch(message);
			expect(await rows()).toEqual(before);
		});

	it('sniff decides by the first bytes (JPEG FF D8 FF, PNG signature, RIFF…WEBP)', async () => {
		expect(sniff(jpeg)).toBe('image/jpeg');
		expect(sniff(pngHeader(1, 1))).toBe('image/png');
		const webp = await sharp(jpeg).webp().toBuffer();
		expect(sniff(webp)).toBe('image/webp');
		expect(sniff(Buffer.from('GIF89a'))).toBeNull();
	});
});

describe('a photo attached to a step, and to a photo field', () => {
	let evidenceId: string;
	it('is stored unchanged under its SHA-256 and downloads byte-identical, with an audit event', async () => {
		const saved = await attach(jpeg);
		evidenceId = saved.evidenceId;
		expect(saved).toMatchObject({
			sha256: sha256Hex(jpeg),
			size: jpeg.length,
			mediaType: 'image/jpeg',
			width: 800,
			height: 600
		});
		const got = await photoBytes(id, evidenceId, 'original');
		expect(got.status).toBe(200);
		if (got.status === 200) {
			expect(Buffer.from(got.bytes).equals(jpeg)).toBe(true);
			expect(sha256Hex(got.bytes)).toBe(saved.sha256);
		}
		const thumb = await photoBytes(id, evidenceId, 'thumb');
		expect(thumb.status).toBe(200);
		if (thumb.status === 200) expect((await sharp(thumb.bytes).metadata()).width).toBe(480);
		const [event] = await t.ownerSql`select new_values from audit_event
			where action = 'evidence.attach' and entity_id = ${id}`;
		expect(event!.new_values).toMatchObject({ sha256: sha256Hex(jpeg), step: 'as-found' });
	});

	it('a photo field’s photo becomes its entry; another replaces it only with a reason', async () => {
		await attach(jpeg, { field: 'as-found-photo' });
		let v = await view(id);
		const entry = v.entries.find((e) => e.fieldKey === 'as-found-photo')!;
		expect(entry.value).toMatchObject({ photo: { sha256: sha256Hex(jpeg), width: 800 } });
		const other = await sharp(jpeg).rotate(90).jpeg().toBuffer();
		const before = await rows();
		const e = await refusal(attach(other, { field: 'as-found-photo' }));
		expect(e.status).toBe(422);
		expect(await rows()).toEqual(before);
		await attach(other, { field: 'as-found-photo' }, 'Blurred: taken again');
		v = await view(id);
		const now = v.entries.filter((x) => x.fieldKey === 'as-found-photo');
		expect(now).toHaveLength(2);
		expect(now[1]!.corrects).toBe(now[0]!.id);
		expect(now[1]!.reason).toBe('Blurred: taken again');
	});

	it('voiding needs a reason; the photo stays, marked voided; a field’s photo is replaced, not voided', async () => {
		const noReason = await refusal(
			voidPhoto(people.tech1!, id, evidenceId, ' ', await stepSeen(id, 'as-found'), ip)
		);
		expect(noReason.status).toBe(422);
		await voidPhoto(
			people.tech1!,
			id,
			evidenceId,
			'Wrong valve in the picture',
			await stepSeen(id, 'as-found'),
			ip
		);
		const v = await view(id);
		expect(v.photos.find((p) => p.id === evidenceId)).toMatchObject({
			voidReason: 'Wrong valve in the picture',
			voidedByName: 'Tomas Verhoek'
		});
		const again = await refusal(
			voidPhoto(people.tech1!, id, evidenceId, 'x', await stepSeen(id, 'as-found'), ip)
		);
		expect(again.status).toBe(409);
		const field = v.photos.find((p) => p.fieldKey === 'as-found-photo')!;
		const e = await refusal(
			voidPhoto(people.tech1!, id, field.id, 'x', await stepSeen(id, 'as-found'), ip)
		);
		expect(e.status).toBe(409);
		// Still served: voided is not deleted.
		expect((await photoBytes(id, evidenceId, 'original')).status).toBe(200);
	});

	it('a technician who is not assigned cannot attach (403); a signed step takes no photo (409)', async () => {
		const e = await refusal(attach(jpeg, {}, '', 'tech2'));
		expect(e.status).toBe(403);
		const values = await goodValues();
		await save('tech1', id, 'isolate', values.isolate!);
		await perform('tech1', id, 'isolate');
		await save('tech1', id, 'as-found', values['as-found']!);
		await perform('tech1', id, 'as-found');
		const signed = await refusal(attach(jpeg));
		expect(signed.status).toBe(409);
		expect(signed.message).toMatch(/This step is signed/);
		// The Performed signature binds the step's own photo (voided, by hash) and still matches.
		const v = await view(id);
		const performed = v.steps.find((x) => x.step.key === 'as-found')!.status.performed!;
		const sig = v.signatures.find((x) => x.id === performed.signatureId)!;
		expect(sig.matches).toBe(true);
		const content = stepSignedContent(
			v.identity,
			v.steps.find((x) => x.step.key === 'as-found')!.step,
			2,
			v.entries,
			v.photos
		).content;
		expect(content.photos).toEqual([{ evidenceId, sha256: sha256Hex(jpeg), voided: true }]);
		expect(contentHash({ type: STEP_RECORD, id: `${id}:as-found`, content })).toBe(sig.contentHash);
	});

	it('bytes changed in the store behind the app are not served (hash checked on the way out)', async () => {
		const v = await view(id);
		const p = v.photos.find((x) => x.id === evidenceId)!;
		await s3().send(
			new PutObjectCommand({
				Bucket: bucket(),
				Key: originalKey(p.sha256),
				Body: Buffer.from('tampered'),
				ContentType: 'image/jpeg'
			})
		);
		const got = await photoBytes(id, evidenceId, 'original');
		expect(got.status).toBe(409);
		if (got.status !== 200) expect(got.message).toMatch(/does not match the hash/);
	});

	it('the audit chain verifies', async () => {
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});
});
