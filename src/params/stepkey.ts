import type { ParamMatcher } from '@sveltejs/kit';

/** A step's key in a procedure (lowercase letters, digits and hyphens; src/lib/schemas/procedure.ts). */
export const match: ParamMatcher = (param) => /^[a-z0-9][a-z0-9-]{0,39}$/.test(param);
