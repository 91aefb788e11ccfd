import { error } from '@sveltejs/kit';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { dispositionSchema } from '$lib/schemas/work';
import { recordAction } from '$lib/server/forms';
import * as sip from '$lib/server/sip-deviations';
import type { Actions, PageServerLoad } from './$types';

/** A deviation of a SIP cycle (9/10): every reader sees it; Quality dispositions it with a signature. */
export const load: PageServerLoad = async (event) => {
	const found = await sip.getSipDeviation(event.params.id);
	if (!found) error(404, 'No such deviation.');
	const c = found.cycle;
	return {
		deviation: {
			id: found.id,
			number: found.number,
			description: found.description,
			raisedAt: found.raisedAt.toISOString(),
			raisedBy: found.raisedBy,
			tag: found.tag,
			equipmentId: found.equipmentId,
			decision: found.decision,
			dispositionText: found.dispositionText,
			dispositionedBy: found.dispositionedBy,
			dispositionedAt: found.dispositionedAt?.toISOString() ?? null
		},
		cycle: {
			startedAt: c.startedAt.toISOString(),
			endedAt: c.endedAt.toISOString(),
			count: c.count,
			peakTemperatureC: c.peakTemperatureC,
			absolutePressureBar: c.absolutePressureBar,
			holdMinutes: c.holdMinutes,
			saturationTemperatureC: c.saturationTemperatureC,
			toleranceC: c.toleranceC
		},
		signatures: found.signatures.map((s) => ({
			id: s.id,
			meaning: s.meaning,
			signerName: s.signerName,
			signedAt: s.signedAt.toISOString(),
			contentHash: s.contentHash,
			matches: s.matches
		})),
		mayDisposition: event.locals.user!.roles.includes('quality') && !found.dispositionId,
		form: await superValidate(
			{ password: '', seen: 0, deviationId: found.id, decision: 'accepted' as const, text: '' },
			zod4(dispositionSchema),
			{ id: 'disposition', errors: false }
		)
	};
};

export const actions: Actions = {
	disposition: (event) =>
		recordAction(
			event,
			{
				schema: dispositionSchema,
				id: 'disposition',
				role: 'quality',
				ok: 'The deviation is dispositioned with your signature.'
			},
			(user, d) =>
				sip.dispositionSipDeviation(
					user,
					event.params.id,
					d.decision,
					d.text,
					d.password,
					event.getClientAddress()
				)
		)
};
