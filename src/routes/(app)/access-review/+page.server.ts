import { accessReview, parsePeriodQuery } from '$lib/server/access-review';
import { requireRole } from '$lib/server/auth/guard';
import type { PageServerLoad } from './$types';

/**
 * The access review (8/10 item 6; AC5, AC3): the period lives in the address (from, to as UTC
 * dates); a wrong one is said on the page, beside the form, instead of an error page.
 */
export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'administrator', 'quality', 'inspector');
	const params = event.url.searchParams;
	const query = parsePeriodQuery(params);
	const asked = { from: params.get('from') ?? '', to: params.get('to') ?? '' };
	if (!query.ok)
		return {
			asked,
			periodError: { message: query.message, field: query.field },
			report: null
		};
	return { asked, periodError: null, report: await accessReview(query.period) };
};
