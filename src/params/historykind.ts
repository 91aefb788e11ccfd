import type { ParamMatcher } from '@sveltejs/kit';

/** The records that have a History page of their own (an account's is under /access-review). */
export const match: ParamMatcher = (param) =>
	param === 'work_order' ||
	param === 'step' ||
	param === 'equipment' ||
	param === 'procedure_version';
