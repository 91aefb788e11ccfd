/**
 * Text that PostgreSQL and the audit chain can store exactly: no NUL character and no lone UTF-16
 * surrogate. Used as a refinement on every free-text field, so such input is a clear 400 beside
 * the field, never a 500 (REQUIREMENTS SE10; brief: bad input loses nothing and never 500s).
 */
export const isStorableText = (value: string) => !value.includes('\u0000') && value.isWellFormed();
export const unstorableTextMessage =
	'This contains characters that cannot be stored (such as a NUL character).';
