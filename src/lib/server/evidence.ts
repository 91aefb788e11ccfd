import { createHash, randomUUID } from 'node:crypto';
import sharp from 'sharp';
import { siteToday } from '$lib/fitness';
import { isStorableText, unstorableTextMessage } from '$lib/schemas/text';
import { currentEntries, type EntryValue } from '$lib/work';
import type { User } from './auth/guard';
import { db } from './db/index';
import { evidence, evidenceVoids, stepEntries } from './db/schema/index';
import { currentSite } from './plant';
import { appendRecordEvent, personOf, RecordError } from './records';
import { getBytes, putOnce } from './storage';
import {
	EntryErrors,
	loadState,
	lockWorkOrder,
	mustBeAssignedAndQualified,
	mustBeInProgress,
	mustBeUnsigned,
	staleStep,
	stillAssigned,
	type WorkOrderState
} from './work-orders';

/**
 * Photo evidence (7/10): checked by its content, stored unchanged under its SHA-256 in the object
 * store with a thumbnail beside it, recorded append-only with its audit event, served only through
 * the app (hash checked on the way out), never deleted — voided with a reason.
 */
export const MAX_PHOTO_BYTES = 15 * 1024 * 1024;
export const MAX_PIXELS = 40_000_000;
export const THUMB_SIZE = 480;

export type PhotoType = 'image/jpeg' | 'image/png' | 'image/webp';

/** The type by the file's first bytes (its magic number), whatever its name or the browser says. */
export function sniff(b: Uint8Array): PhotoType | null {
	if (b.length >= 3 && b[0] === 0xff && b[1] === 0xd8 && b[2] === 0xff) return 'image/jpeg';
	const png = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
	if (b.length >= 8 && png.every((v, i) => b[i] === v)) return 'image/png';
	const ascii = (from: number, to: number) => String.fromCharCode(...b.subarray(from, to));
	if (b.length >= 12 && ascii(0, 4) === 'RIFF' && ascii(8, 12) === 'WEBP') return 'image/webp';
	return null;
}

export const sha256Hex = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

export type CheckedPhoto = {
	mediaType: PhotoType;
	width: number;
	height: number;
	size: number;
	sha256: string;
	thumb: Buffer;
	thumbSha256: string;
};

/** The checks of an upload, in the order a person can act on; a refusal says what to do. */
export async function checkPhoto(
	bytes: Uint8Array
): Promise<{ ok: true; photo: CheckedPhoto } | { ok: false; status: 400 | 413; message: string }> {
	const refuse = (message: string, status: 400 | 413 = 400) =>
		({ ok: false, status, message }) as const;
	if (bytes.length === 0) return refuse('The file is empty: take or choose the photo again.');
	if (bytes.length > MAX_PHOTO_BYTES)
		return refuse('The photo is larger than 15 MB: take it at a lower resolution.', 413);
	const mediaType = sniff(bytes);
	if (!mediaType)
		return refuse(
			'This is not a JPEG, PNG or WebP photo (checked by its content, not its name): choose a photo.'
		);
	let width: number;
	let height: number;
	try {
		const meta = await sharp(bytes, { limitInputPixels: false }).metadata();
		width = meta.width ?? 0;
		height = meta.height ?? 0;
		const formats: Record<string, PhotoType> = {
			jpeg: 'image/jpeg',
			png: 'image/png',
			webp: 'image/webp'
		};
		const format = formats[String(meta.format ?? '')];
		if (format !== mediaType) return refuse('The photo’s content does not match its type.');
	} catch {
		return refuse('The photo cannot be read: it is damaged or incomplete. Take it again.');
	}
	if (!width || !height) return refuse('The photo has no size: it is damaged. Take it again.');
	if (width * height > MAX_PIXELS)
		return refuse(
			`The photo has ${((width * height) / 1e6).toFixed(0)} megapixels; at most 40 are kept. Take it at a lower resolution.`
		);
	let thumb: Buffer;
	try {
		// Decoding the whole image for the thumbnail finds a truncated or corrupt file.
		thumb = await sharp(bytes, { limitInputPixels: MAX_PIXELS, failOn: 'truncated' })
			.rotate()
			.resize(THUMB_SIZE, THUMB_SIZE, { fit: 'inside', withoutEnlargement: true })
			.jpeg({ quality: 80 })
			.toBuffer();
	} catch {
		return refuse('The photo cannot be read: it is damaged or incomplete. Take it again.');
	}
	return {
		ok: true,
		photo: {
			mediaType,
			width,
			height,
			size: bytes.length,
			sha256: sha256Hex(bytes),
			thumb,
			thumbSha256: sha256Hex(thumb)
		}
	};
}

export const originalKey = (sha256: string) => `evidence/${sha256}`;
export const thumbKey = (sha256: string) => `evidence/thumbs/${sha256}`;

export type PhotoTarget = {
	stepKey: string;
	fieldKey?: string | null;
	deviationId?: string | null;
};

/**
 * Attaches a checked photo: to a photo field of a step (it becomes the field's entry; a second
 * photo corrects the first, with a reason), to a step, or to a deviation. An assigned technician
 * qualified that day, while the work is in progress and the step is not signed. The objects are
 * written before the transaction (slow work never holds the chain head): content-addressed, an
 * object no row names is harmless.
 */
export async function attachPhoto(
	user: User,
	workOrderId: string,
	target: PhotoTarget,
	bytes: Uint8Array,
	opts: { seen: number; reason?: string; note?: string },
	clientAddress: string | null = null
) {
	const by = personOf(user);
	const site = await currentSite();
	if (!site) throw new RecordError('The site is not set up.', undefined, 409);
	const s0 = await loadState(db(), workOrderId);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	const place = placeOf(s0, target);
	await mustBeAssignedAndQualified(
		user,
		s0,
		'attach photos to this work order',
		siteToday(site.timeZone)
	);
	const note = (opts.note ?? '').trim();
	const reason = (opts.reason ?? '').trim();
	for (const text of [note, reason])
		if (!isStorableText(text) || text.length > 500)
			throw new EntryErrors({ photo: `Keep it under 500 characters. ${unstorableTextMessage}` });
	const checked = await checkPhoto(bytes);
	if (!checked.ok) throw new RecordError(checked.message, 'photo', checked.status);
	const photo = checked.photo;
	await putOnce(originalKey(photo.sha256), bytes, photo.mediaType);
	await putOnce(thumbKey(photo.thumbSha256), photo.thumb, 'image/jpeg');

	return db().transaction(async (tx) => {
		await lockWorkOrder(tx, workOrderId);
		const s = (await loadState(tx, workOrderId))!;
		stillAssigned(user, s);
		mayChangeStep(s, place.stepKey);
		const step = s.steps.find((x) => x.step.key === place.stepKey)!;
		if (step.status.revision !== opts.seen) throw staleStep();
		const previous = place.fieldKey
			? (currentEntries(step.step, s.entries).find((e) => e.fieldKey === place.fieldKey) ?? null)
			: null;
		if (previous && !reason)
			throw new EntryErrors(
				{ [`reason:${place.fieldKey}`]: 'This replaces the saved photo: give the reason.' },
				422
			);
		const evidenceId = randomUUID();
		const facts = {
			evidenceId,
			sha256: photo.sha256,
			size: photo.size,
			mediaType: photo.mediaType,
			width: photo.width,
			height: photo.height,
			thumbSha256: photo.thumbSha256
		};
		const rec = await appendRecordEvent(tx, by, {
			action: 'evidence.attach',
			entityType: 'work_order',
			entityId: workOrderId,
			newValues: {
				...facts,
				step: place.stepKey,
				field: place.fieldKey,
				deviation: place.deviationNumber,
				note: note || null
			},
			clientAddress
		});
		await tx.insert(evidence).values({
			id: evidenceId,
			workOrderId,
			stepKey: place.stepKey,
			fieldKey: place.fieldKey,
			deviationId: place.deviationId,
			sha256: photo.sha256,
			size: photo.size,
			mediaType: photo.mediaType,
			width: photo.width,
			height: photo.height,
			thumbSha256: photo.thumbSha256,
			note: note || null,
			...rec
		});
		if (place.fieldKey) {
			// The photo field's entry: what a Performed signature binds to.
			const value: EntryValue = {
				photo: {
					evidenceId,
					sha256: photo.sha256,
					mediaType: photo.mediaType,
					width: photo.width,
					height: photo.height,
					size: photo.size
				}
			};
			const entryId = randomUUID();
			const erec = await appendRecordEvent(tx, by, {
				action: previous ? 'work_order.entry_correct' : 'work_order.entry',
				entityType: 'work_order',
				entityId: workOrderId,
				newValues: {
					entryId,
					step: place.stepKey,
					field: place.fieldKey,
					value,
					withinLimits: null,
					performedAt: rec.recordedAt.toISOString()
				},
				previousValues: previous ? { entryId: previous.id, value: previous.value } : null,
				reason: previous ? reason : null,
				clientAddress
			});
			await tx.insert(stepEntries).values({
				id: entryId,
				workOrderId,
				stepKey: place.stepKey,
				fieldKey: place.fieldKey,
				value,
				withinLimits: null,
				performedAt: rec.recordedAt,
				corrects: previous?.id ?? null,
				reason: previous ? reason : null,
				...erec
			});
		}
		return facts;
	});
}

/** Where a photo goes, checked against the procedure and the work order (404 for what is not there). */
function placeOf(s: WorkOrderState, target: PhotoTarget) {
	if (target.deviationId) {
		const d = s.deviations.find((x) => x.id === target.deviationId);
		if (!d) throw new RecordError('No such deviation on this work order.', undefined, 404);
		return { stepKey: d.stepKey, fieldKey: null, deviationId: d.id, deviationNumber: d.number };
	}
	const step = s.steps.find((x) => x.step.key === target.stepKey);
	if (!step) throw new RecordError('No such step in this procedure.', undefined, 404);
	if (target.fieldKey) {
		const field = step.step.fields.find((f) => f.key === target.fieldKey);
		if (!field || field.kind !== 'photo')
			throw new RecordError('No such photo field on this step.', undefined, 404);
	}
	return {
		stepKey: step.step.key,
		fieldKey: target.fieldKey ?? null,
		deviationId: null,
		deviationNumber: null
	};
}

/** Photos change a step only while the work is in progress and the step is not signed. */
function mayChangeStep(s: WorkOrderState, stepKey: string) {
	mustBeInProgress(s, 'attaching photos', 'photos can no longer be attached or voided');
	mustBeUnsigned(s, stepKey, 'its photos can no longer change');
}

/**
 * Voids a photo attached by mistake, with the reason: it stays in the record, marked voided. A
 * photo field's photo is replaced by attaching another (a correction), not voided.
 */
export async function voidPhoto(
	user: User,
	workOrderId: string,
	evidenceId: string,
	reason: string,
	seen: number,
	clientAddress: string | null = null
) {
	const by = personOf(user);
	const site = await currentSite();
	if (!site) throw new RecordError('The site is not set up.', undefined, 409);
	const text = reason.trim();
	if (!text) throw new EntryErrors({ reason: 'Say why the photo is voided.' }, 422);
	if (!isStorableText(text) || text.length > 500)
		throw new EntryErrors({ reason: 'Keep the reason under 500 characters, in plain text.' });
	const s0 = await loadState(db(), workOrderId);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	await mustBeAssignedAndQualified(
		user,
		s0,
		'void photos on this work order',
		siteToday(site.timeZone)
	);
	return db().transaction(async (tx) => {
		await lockWorkOrder(tx, workOrderId);
		const s = (await loadState(tx, workOrderId))!;
		stillAssigned(user, s);
		const photo = s.photos.find((p) => p.id === evidenceId);
		if (!photo) throw new RecordError('No such photo on this work order.', undefined, 404);
		if (photo.voidId) throw new RecordError('This photo is already voided.', undefined, 409);
		if (photo.fieldKey)
			throw new RecordError(
				'A photo field’s photo is replaced by attaching another, with a reason.',
				undefined,
				409
			);
		mayChangeStep(s, photo.stepKey!);
		if (s.steps.find((x) => x.step.key === photo.stepKey)!.status.revision !== seen)
			throw staleStep();
		const id = randomUUID();
		const rec = await appendRecordEvent(tx, by, {
			action: 'evidence.void',
			entityType: 'work_order',
			entityId: workOrderId,
			newValues: { evidenceId, sha256: photo.sha256, step: photo.stepKey },
			reason: text,
			clientAddress
		});
		await tx.insert(evidenceVoids).values({ id, evidenceId, reason: text, ...rec });
	});
}

/**
 * A stored photo or its thumbnail for the authorised route, with its hash checked on the way
 * out: bytes that no longer match their record are not served.
 */
export async function photoBytes(
	workOrderId: string,
	evidenceId: string,
	variant: 'original' | 'thumb'
) {
	const s = await loadState(db(), workOrderId);
	const photo = s?.photos.find((p) => p.id === evidenceId);
	if (!photo) return { status: 404 as const, message: 'No such photo on this work order.' };
	const sha = variant === 'thumb' ? photo.thumbSha256 : photo.sha256;
	const bytes = await getBytes(variant === 'thumb' ? thumbKey(sha) : originalKey(sha));
	if (!bytes)
		return { status: 404 as const, message: 'The stored photo is missing from the object store.' };
	if (sha256Hex(bytes) !== sha)
		return {
			status: 409 as const,
			message: 'The stored photo does not match the hash in its record: it is not served.'
		};
	return {
		status: 200 as const,
		bytes,
		sha256: sha,
		mediaType: variant === 'thumb' ? 'image/jpeg' : photo.mediaType
	};
}
