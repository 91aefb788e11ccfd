import { error, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { statusChangeSchema } from '$lib/schemas/master';
import { requireRole } from '$lib/server/auth/guard';
import { refused } from '$lib/server/forms';
import * as procedures from '$lib/server/procedures';
import { personOf, RecordError } from '$lib/server/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { user } = await event.parent();
	const found = await procedures.getProcedure(event.params.id);
	if (!found) error(404, 'No such procedure.');
	return {
		procedure: {
			id: found.id,
			code: found.code,
			versions: found.versions.map((v) => ({
				id: v.id,
				version: v.version,
				status: v.status,
				title: v.title,
				reason: v.reason,
				startedBy: v.startedBy,
				startedAt: v.startedAt.toISOString(),
				revision: v.revision,
				approvedBy: v.approval?.recordedByName ?? null,
				approvedAt: v.approval?.recordedAt.toISOString() ?? null
			}))
		},
		mayWrite: user.roles.includes('planner'),
		newVersionForm: await superValidate(zod4(statusChangeSchema), { id: 'new-version' })
	};
};

export const actions: Actions = {
	newVersion: async (event) => {
		const user = await requireRole(event, 'planner');
		const form = await superValidate(event.request, zod4(statusChangeSchema), {
			id: 'new-version'
		});
		if (!form.valid) return refused(form);
		let versionId: string;
		try {
			versionId = await procedures.startNewVersion(
				personOf(user),
				event.params.id,
				form.data.reason,
				event.getClientAddress()
			);
		} catch (e) {
			if (e instanceof RecordError)
				return setError(form, 'reason', e.message, { status: e.status });
			throw e;
		}
		redirect(303, `/procedures/versions/${versionId}/edit`);
	}
};
