import { error } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { signSchema } from '$lib/schemas/signature';
import { requireRole } from '$lib/server/auth/guard';
import { refused } from '$lib/server/forms';
import * as procedures from '$lib/server/procedures';
import { RecordError } from '$lib/server/records';
import { SignatureError } from '$lib/server/signatures/index';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { user } = await event.parent();
	const found = await procedures.getVersion(event.params.id);
	if (!found) error(404, 'No such procedure version.');
	const { procedure, version, authors, signatures, revisions } = found;
	const isAuthor = authors.includes(event.locals.user!.id);
	return {
		procedure: { id: procedure.id, code: procedure.code },
		version: {
			id: version.id,
			version: version.version,
			status: version.status,
			revision: version.revision,
			reason: version.reason,
			content: version.content,
			startedBy: version.startedBy,
			startedAt: version.startedAt.toISOString(),
			savedBy: version.savedBy,
			savedAt: version.savedAt.toISOString()
		},
		revisions: revisions.map((r) => ({
			revision: r.revision,
			by: r.recordedByName,
			at: r.recordedAt.toISOString()
		})),
		signatures: signatures.map((s) => ({
			id: s.id,
			meaning: s.meaning,
			signerName: s.signerName,
			signedAt: s.signedAt.toISOString(),
			contentHash: s.contentHash,
			matches: s.matches
		})),
		mayEdit: version.status === 'draft' && user.roles.includes('planner'),
		mayApprove: version.status === 'draft' && user.roles.includes('quality'),
		isAuthor,
		signForm: await superValidate({ password: '', seen: version.revision }, zod4(signSchema), {
			id: 'approve',
			errors: false
		})
	};
};

export const actions: Actions = {
	approve: async (event) => {
		const user = await requireRole(event, 'quality');
		const form = await superValidate(event.request, zod4(signSchema), { id: 'approve' });
		if (!form.valid) return refused(form);
		try {
			await procedures.approveVersion(
				user,
				event.params.id,
				form.data.seen,
				form.data.password,
				event.getClientAddress()
			);
		} catch (e) {
			form.data.password = '';
			if (e instanceof SignatureError)
				return setError(form, 'password', e.message, { status: e.status === 423 ? 403 : e.status });
			if (e instanceof RecordError)
				return message(form, { kind: 'error', text: e.message }, { status: e.status });
			throw e;
		}
		form.data.password = '';
		return message(form, {
			kind: 'ok',
			text: 'Approved and signed. This version is now effective; the one before it is superseded.'
		});
	}
};
