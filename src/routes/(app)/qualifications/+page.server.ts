import { fail } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { addDays, siteToday } from '$lib/fitness';
import { qualificationSchema, withdrawQualificationSchema } from '$lib/schemas/master';
import { listAccounts } from '$lib/server/accounts';
import { requireRole } from '$lib/server/auth/guard';
import { refused } from '$lib/server/forms';
import { currentSite } from '$lib/server/plant';
import * as procedures from '$lib/server/procedures';
import * as qualifications from '$lib/server/qualifications';
import { personOf, RecordError } from '$lib/server/records';
import type { Actions, PageServerLoad } from './$types';

/** People see their own qualifications; Planners, Quality and Inspectors see everyone's (4/10). */
export const load: PageServerLoad = async (event) => {
	const { user } = await event.parent();
	const me = event.locals.user!;
	const seesAll = user.roles.some((r) => r === 'planner' || r === 'quality' || r === 'inspector');
	const mayRecord = user.roles.some((r) => r === 'planner' || r === 'quality');
	const site = (await currentSite())!;
	const today = siteToday(site.timeZone);
	const show = event.url.searchParams.get('show');
	const rows = await qualifications.listQualifications(today, seesAll ? undefined : me.id);
	const filtered = rows.filter((r) =>
		show === 'lapsing' ? r.lapsesSoon : show === 'lapsed' ? !r.qualified : true
	);
	return {
		today,
		soon: addDays(today, 30),
		show: show === 'lapsing' || show === 'lapsed' ? show : 'all',
		seesAll,
		mayRecord,
		qualifications: filtered.map((r) => ({
			qualificationId: r.id,
			withdrawnOn: r.withdrawnOn,
			accountId: r.accountId,
			personName: r.personName,
			procedureId: r.procedureId,
			procedureCode: r.procedureCode,
			trainedOn: r.trainedOn,
			expiresOn: r.expiresOn,
			trainer: r.trainer,
			qualified: r.qualified,
			lapsesSoon: r.lapsesSoon,
			records: r.records.length
		})),
		people: mayRecord
			? (await listAccounts())
					.filter((a) => a.active && !a.roles.includes('administrator'))
					.map((a) => ({ id: a.id, name: `${a.fullName} (${a.username})` }))
			: [],
		procedures: mayRecord
			? (await procedures.listProcedures(site.id)).map((p) => ({
					id: p.id,
					name: `${p.code} · ${p.title}`
				}))
			: [],
		withdrawForm: await superValidate(zod4(withdrawQualificationSchema)),
		form: await superValidate(
			{
				accountId: '',
				procedureId: '',
				trainedOn: today,
				expiresOn: addDays(today, 365),
				trainer: '',
				note: ''
			},
			zod4(qualificationSchema),
			{ errors: false }
		)
	};
};

export const actions: Actions = {
	withdraw: async (event) => {
		const user = await requireRole(event, 'planner', 'quality');
		const raw = await event.request.formData();
		const id = String(raw.get('qualificationId') ?? '');
		const form = await superValidate(raw, zod4(withdrawQualificationSchema), {
			id: `withdraw-${id}`
		});
		if (!form.valid) return refused(form);
		try {
			await qualifications.withdrawQualification(
				personOf(user),
				form.data.qualificationId,
				form.data.reason,
				event.getClientAddress()
			);
		} catch (e) {
			if (e instanceof RecordError)
				return setError(form, 'reason', e.message, { status: e.status });
			throw e;
		}
		return message(form, { kind: 'ok', text: 'Withdrawn: it no longer qualifies from today.' });
	},
	record: async (event) => {
		const user = await requireRole(event, 'planner', 'quality');
		const form = await superValidate(event.request, zod4(qualificationSchema));
		if (!form.valid) return fail(400, { form });
		try {
			await qualifications.recordQualification(personOf(user), form.data, event.getClientAddress());
		} catch (e) {
			if (e instanceof RecordError && (e.field === 'accountId' || e.field === 'procedureId'))
				return setError(form, e.field, e.message, { status: e.status });
			if (e instanceof RecordError)
				return message(form, { kind: 'error', text: e.message }, { status: e.status });
			throw e;
		}
		return message(form, { kind: 'ok', text: 'Training recorded.' });
	}
};
