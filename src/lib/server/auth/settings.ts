import { z } from 'zod';
import { env } from '$env/dynamic/private';

/**
 * Sign-in and session settings, from the environment (README "Configuration"). Read on each
 * call so that tests can start servers with other values; parsing is cheap.
 */
const schema = z.object({
	/** Minutes without a request after which a session ends (ASVS 7.3.1; SE7). */
	SESSION_IDLE_MINUTES: z.coerce.number().positive().default(15),
	/** Hours after sign-in at which a session ends whatever happens (ASVS 7.3.2; SE7). */
	SESSION_ABSOLUTE_HOURS: z.coerce.number().positive().default(12),
	/** Consecutive failed sign-ins that lock an account until an administrator unlocks it (SE5). */
	AUTH_LOCKOUT_FAILURES: z.coerce.number().int().min(1).default(5),
	/** Failures per username answered at once before the progressive delay starts. */
	AUTH_DELAY_FREE_PER_USERNAME: z.coerce.number().int().min(0).default(2),
	/** Failures per client address answered at once before the delay starts (shared terminals). */
	AUTH_DELAY_FREE_PER_ADDRESS: z.coerce.number().int().min(0).default(10),
	/** First delay in seconds; it doubles with each further failure … */
	AUTH_DELAY_BASE_SECONDS: z.coerce.number().min(0).default(1),
	/** … up to this many seconds. */
	AUTH_DELAY_MAX_SECONDS: z.coerce.number().min(0).default(60),
	/** A key's failures are forgotten this long after its latest failure. */
	AUTH_DELAY_RESET_MINUTES: z.coerce.number().positive().default(15)
});

export type AuthSettings = z.infer<typeof schema>;

export function authSettings(): AuthSettings {
	const parsed = schema.safeParse(env);
	if (!parsed.success) {
		throw new Error(`bad sign-in settings in the environment: ${z.prettifyError(parsed.error)}`);
	}
	return parsed.data;
}
