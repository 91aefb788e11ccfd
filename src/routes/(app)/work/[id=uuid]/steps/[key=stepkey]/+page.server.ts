import { error, fail } from '@sveltejs/kit';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { siteToday } from '$lib/fitness';
import { signSchema } from '$lib/schemas/signature';
import { stepReturnSchema } from '$lib/schemas/work';
import { requireRole } from '$lib/server/auth/guard';
import { recordAction } from '$lib/server/forms';
import { usableInstruments } from '$lib/server/instruments';
import { lotsOfSite } from '$lib/server/parts';
import { currentSite } from '$lib/server/plant';
import { isQualified } from '$lib/server/qualifications';
import { RecordError } from '$lib/server/records';
import { voidPhoto } from '$lib/server/evidence';
import * as work from '$lib/server/work-orders';
import { fromLocalInput, localInputValue } from '$lib/time';
import { passesFor } from '$lib/calc/tightening';
import { bandOf, passProgress, rawOf, stepDone, turOf } from '$lib/work';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await event.parent();
	const user = event.locals.user!;
	const found = await work.getWorkOrder(event.params.id);
	if (!found) error(404, 'No such work order.');
	const current = found.steps.find((s) => s.step.key === event.params.key);
	if (!current) error(404, 'No such step in this procedure.');
	const site = (await currentSite())!;
	const today = siteToday(site.timeZone);
	const kinds = [
		...new Set([
			...current.step.fields.filter((f) => f.kind === 'instrument').map((f) => f.instrumentKind),
			...(current.step.fields.some((f) => f.kind === 'tightening') ? ['Torque wrench'] : [])
		])
	];
	const instruments = Object.fromEntries(
		await Promise.all(
			kinds.map(async (k) => [
				k,
				(await usableInstruments(site.id, today, k)).map((i) => ({
					id: i.id,
					code: i.code,
					description: i.description,
					dueOn: i.dueOn,
					// Z540.3: how well it resolves each tolerance of this step (warning below 4:1).
					tur: turOf(current.step.fields, i)
				}))
			])
		)
	) as Record<
		string,
		{
			id: string;
			code: string;
			description: string;
			dueOn: string | null;
			tur: { field: string; ratio: number }[];
		}[]
	>;
	// Guided tightening: the passes from the valve's data (manufacturer's figures), and those ticked.
	const attributes = found.equipment.attributes as Record<string, unknown>;
	const tightening = Object.fromEntries(
		current.step.fields
			.filter((f) => f.kind === 'tightening')
			.map((f) => {
				const torque = attributes.fastenerTorqueNm;
				const plan = passesFor(
					f.pattern,
					Number(attributes.bonnetFasteners),
					typeof torque === 'number' ? torque : null
				);
				const progress = passProgress(found.passes, current.step.key, f.key);
				return [
					f.key,
					{
						fasteners: Number(attributes.bonnetFasteners) || 0,
						passes: plan.ok ? plan.value : [],
						refused: plan.ok ? null : plan.message,
						round: progress.round,
						done: progress.done.map((p) => ({
							pass: p.pass,
							name: p.name,
							at: p.recordedAt,
							by: p.recordedByName
						})),
						restarts: progress.restarts.map((p) => ({
							round: p.round,
							reason: p.reason ?? '',
							at: p.recordedAt,
							by: p.recordedByName
						}))
					}
				];
			})
	);
	const hasLots = current.step.fields.some((f) => f.kind === 'part_lot');
	const mine = found.entries.filter(
		(e) => e.stepKey === current.step.key && !found.entries.some((x) => x.corrects === e.id)
	);
	const seen = current.status.revision;
	const assigned = found.plan.assignees.includes(user.id);
	const performer = current.status.performed?.recordedBy;
	const enteredByMe = found.entries.some(
		(e) => e.stepKey === current.step.key && e.recordedBy === user.id
	);
	const qualified = await isQualified(user.id, found.wo.procedureId, today);
	return {
		wo: found.wo,
		status: found.status,
		equipment: found.equipment,
		steps: found.steps.map((s) => ({
			key: s.step.key,
			title: s.step.title,
			position: s.position,
			state: s.status.state,
			done: stepDone(s.step, s.status)
		})),
		current,
		entries: found.entries.filter((e) => e.stepKey === current.step.key),
		deviations: found.deviations.filter((d) => d.stepKey === current.step.key),
		signatures: found.signatures,
		raw: Object.fromEntries(mine.map((e) => [e.fieldKey, rawOf(e.value)])),
		units: Object.fromEntries(
			mine.flatMap((e) =>
				'number' in e.value && e.value.unit
					? [[e.fieldKey, e.value.unit]]
					: 'tightening' in e.value
						? [[e.fieldKey, e.value.finalTorque.unit]]
						: []
			)
		) as Record<string, string>,
		wrenches: Object.fromEntries(
			mine.flatMap((e) =>
				'tightening' in e.value ? [[e.fieldKey, e.value.wrench.instrumentId]] : []
			)
		) as Record<string, string>,
		tightening,
		band: bandOf(attributes),
		photos: found.photos.filter((p) => p.stepKey === current.step.key),
		photoError: event.url.searchParams.get('photoError')?.slice(0, 300) ?? null,
		instruments,
		lots: hasLots ? await lotsOfSite(site.id) : [],
		materialCode: String(found.equipment.attributes.diaphragmMaterialCode ?? ''),
		now: localInputValue(new Date(), site.timeZone),
		today,
		seen,
		me: {
			assigned,
			qualified,
			mayEnter: found.status === 'in_progress' && assigned && qualified,
			mayVerify:
				found.status === 'in_progress' &&
				current.step.verificationRequired &&
				current.status.state === 'performed' &&
				qualified &&
				performer !== user.id &&
				!enteredByMe,
			tookPart: performer === user.id || enteredByMe
		},
		forms: {
			perform: await superValidate({ password: '', seen }, zod4(signSchema), {
				id: 'perform',
				errors: false
			}),
			verify: await superValidate({ password: '', seen }, zod4(signSchema), {
				id: 'verify',
				errors: false
			}),
			returnStep: await superValidate({ seen, reason: '' }, zod4(stepReturnSchema), {
				id: 'return-step',
				errors: false
			})
		}
	};
};

export const actions: Actions = {
	/** The step's entries: a plain form (its fields come from the procedure), read field by field. */
	save: async (event) => {
		const user = await requireRole(event, 'technician');
		let body: FormData;
		try {
			body = await event.request.formData();
		} catch {
			return fail(400, {
				typed: {} as Record<string, string>,
				errors: { form: 'The form could not be read: reload the page.' }
			});
		}
		// Keyed by field keys from the procedure: no prototype, so a key like "constructor" is just a key.
		const values: Record<string, string> = Object.create(null);
		const reasons: Record<string, string> = Object.create(null);
		const deviations: Record<string, string> = Object.create(null);
		const units: Record<string, string> = Object.create(null);
		const wrenches: Record<string, string> = Object.create(null);
		const typed: Record<string, string> = {};
		const tooLong: Record<string, string> = {};
		for (const [name, v] of body) {
			if (typeof v !== 'string') continue;
			if (v.length > 5000) {
				tooLong[name.split(':', 2)[1] ?? name] =
					'That is too long for this field: keep it under 2000 characters.';
				continue;
			}
			typed[name] = v;
			const [kind, key] = name.split(':', 2) as [string, string | undefined];
			if (!key) continue;
			if (kind === 'value') values[key] = v;
			else if (kind === 'reason') reasons[key] = v;
			else if (kind === 'deviation') deviations[key] = v;
			else if (kind === 'unit') units[key] = v;
			else if (kind === 'wrench') wrenches[key] = v;
		}
		if (Object.keys(tooLong).length) return fail(400, { typed, errors: tooLong });
		const site = (await currentSite())!;
		const at = String(body.get('performedAt') ?? '').trim();
		const performedAt = at ? fromLocalInput(at, site.timeZone) : null;
		if (at && !performedAt)
			return fail(400, { typed, errors: { performedAt: 'Enter the date and time it was done.' } });
		const seenText = String(body.get('seen') ?? '');
		const seen = Number(seenText);
		if (!/^\d{1,9}$/.test(seenText))
			return fail(400, { typed, errors: { form: 'Reload the page and enter the values again.' } });
		try {
			const saved = await work.saveStep(
				user,
				event.params.id,
				event.params.key,
				{
					values,
					reasons,
					deviations,
					units,
					wrenches,
					performedAt,
					lateReason: String(body.get('lateReason') ?? ''),
					seen
				},
				event.getClientAddress()
			);
			const raised = saved.filter((s) => s.deviation).map((s) => s.deviation);
			return {
				saved: saved.length,
				text: `Saved ${saved.length} ${saved.length === 1 ? 'value' : 'values'}.${raised.length ? ` Deviation ${raised.join(', ')} raised for Quality.` : ''}`
			};
		} catch (e) {
			if (e instanceof work.EntryErrors) return fail(e.status, { typed, errors: e.fields });
			if (e instanceof RecordError)
				return fail(e.status, { typed, errors: { form: e.message }, stale: e.status === 409 });
			throw e;
		}
	},
	/** Guided tightening: one pass ticked (in order), or the passes started again with a reason. */
	pass: async (event) => {
		const user = await requireRole(event, 'technician');
		let body: FormData;
		try {
			body = await event.request.formData();
		} catch {
			return fail(400, { passError: 'The form could not be read: reload the page.' });
		}
		// The ticks are buttons of the step's form: what was typed there comes back untouched.
		const typed: Record<string, string> = {};
		for (const [name, v] of body)
			if (
				typeof v === 'string' &&
				v.length <= 5000 &&
				(name.includes(':') || name === 'performedAt' || name === 'lateReason') &&
				!name.startsWith('restartReason:')
			)
				typed[name] = v;
		const seenText = String(body.get('seen') ?? '');
		const tick = String(body.get('tick') ?? '');
		const restart = String(body.get('restart') ?? '');
		const [field, passText] = restart ? [restart, ''] : tick.split(':', 2);
		if (!/^\d{1,9}$/.test(seenText) || !/^[a-z0-9][a-z0-9-]{0,39}$/.test(field ?? ''))
			return fail(400, { typed, passError: 'Reload the page and tick the pass again.' });
		if (!restart && !/^\d{1,2}$/.test(passText ?? ''))
			return fail(400, { typed, passError: 'Tick one of the passes shown.' });
		try {
			const row = restart
				? await work.restartPasses(
						user,
						event.params.id,
						event.params.key,
						field!,
						String(body.get(`restartReason:${field}`) ?? '').slice(0, 2000),
						Number(seenText),
						event.getClientAddress()
					)
				: await work.tickPass(
						user,
						event.params.id,
						event.params.key,
						field!,
						Number(passText),
						Number(seenText),
						event.getClientAddress()
					);
			return {
				typed,
				passText: restart ? 'The passes start again from the first.' : `Ticked: ${row.name}.`
			};
		} catch (e) {
			if (e instanceof work.EntryErrors)
				return fail(e.status, { typed, passError: Object.values(e.fields)[0] ?? e.message });
			if (e instanceof RecordError)
				return fail(e.status, { typed, passError: e.message, stale: e.status === 409 });
			throw e;
		}
	},
	/** Voids a photo attached by mistake, with the reason (it stays in the record, marked voided). */
	voidPhoto: async (event) => {
		const user = await requireRole(event, 'technician');
		let body: FormData;
		try {
			body = await event.request.formData();
		} catch {
			return fail(400, { voidError: 'The form could not be read: reload the page.' });
		}
		const evidenceId = String(body.get('evidence') ?? '');
		const seenText = String(body.get('seen') ?? '');
		if (!/^[0-9a-f-]{36}$/i.test(evidenceId) || !/^\d{1,9}$/.test(seenText))
			return fail(400, { voidError: 'Reload the page and void the photo again.' });
		try {
			await voidPhoto(
				user,
				event.params.id,
				evidenceId,
				String(body.get('reason') ?? '').slice(0, 2000),
				Number(seenText),
				event.getClientAddress()
			);
			return { voidText: 'The photo is voided; it stays in the record, marked voided.' };
		} catch (e) {
			if (e instanceof work.EntryErrors)
				return fail(e.status, {
					voidError: Object.values(e.fields)[0] ?? e.message,
					voidFor: evidenceId
				});
			if (e instanceof RecordError)
				return fail(e.status, { voidError: e.message, voidFor: evidenceId });
			throw e;
		}
	},
	perform: (event) =>
		recordAction(
			event,
			{ schema: signSchema, id: 'perform', role: 'technician', ok: 'Signed Performed.' },
			(user, d) =>
				work.performStep(
					user,
					event.params.id,
					event.params.key,
					d.password,
					d.seen,
					event.getClientAddress()
				)
		),
	verify: (event) =>
		recordAction(
			event,
			{ schema: signSchema, id: 'verify', role: 'technician', ok: 'Signed Verified.' },
			(user, d) =>
				work.verifyStep(
					user,
					event.params.id,
					event.params.key,
					d.password,
					d.seen,
					event.getClientAddress()
				)
		),
	returnStep: (event) =>
		recordAction(
			event,
			{
				schema: stepReturnSchema,
				id: 'return-step',
				role: 'technician',
				ok: 'Returned to the performer with your reason.'
			},
			(user, d) =>
				work.returnStep(
					user,
					event.params.id,
					event.params.key,
					d.reason,
					d.seen,
					event.getClientAddress()
				)
		)
};
