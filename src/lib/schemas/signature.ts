import { z } from 'zod';

/**
 * Every e-signature form (21 CFR 11.200(a)(1); REQUIREMENTS ES4): the signer's password, each
 * time, and `seen` — the revision or state the signer was shown, so that a signature never lands
 * on content they did not see.
 */
export const signSchema = z.object({
	password: z
		.string({ error: 'Enter your password to sign.' })
		.min(1, 'Enter your password to sign.')
		.max(1024, 'That is longer than any password here.'),
	seen: z.number().int().min(0)
});
