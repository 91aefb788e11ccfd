import { CredentialsSignin, SvelteKitAuth } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import { z } from 'zod';
import type { Role } from '$lib/roles';
import { isStorableText } from '$lib/schemas/text';
import { db } from '../db/index';
import { log } from '../log';
import { checkSession, endSession, openSession } from './sessions';
import { authSettings } from './settings';
import { attemptSignIn } from './sign-in';

/** A refused sign-in; `code` goes into the redirect URL as `?code=` and picks the message shown. */
export class SignInRefused extends CredentialsSignin {
	retryAfter?: number;
	constructor(code: 'credentials' | 'locked' | 'throttled', retryAfter?: number) {
		super();
		this.code = code;
		this.retryAfter = retryAfter;
	}
}

const credentials = z.object({
	username: z.string().trim().min(1).max(64).refine(isStorableText),
	password: z.string().min(1).max(1024)
});

/**
 * Auth.js with the Credentials provider at its default base path /auth, so that
 * `POST /auth/callback/credentials` and `GET /auth/session` work from any HTTP client. The
 * session cookie is an encrypted JWT that carries the id of a server-side session row; the jwt
 * callback, which Auth.js runs on every way in and on every session read, opens that row at
 * sign-in and checks it on every request afterwards (SE7, SE8, AC6).
 */
export const { handle, signIn, signOut } = SvelteKitAuth(async (event) => {
	const settings = authSettings();
	const clientAddress = event.getClientAddress();
	return {
		trustHost: true,
		session: { strategy: 'jwt', maxAge: Math.round(settings.SESSION_ABSOLUTE_HOURS * 3600) },
		pages: { signIn: '/login', error: '/login' },
		logger: {
			// Refused sign-ins are expected and already audited; anything else is logged without secrets.
			error(error) {
				if (error instanceof CredentialsSignin) return;
				log.error('auth error', { name: error.name, message: error.message });
			},
			warn(code) {
				log.warn('auth warning', { code });
			},
			debug() {}
		},
		providers: [
			Credentials({
				credentials: {
					username: { label: 'Username' },
					password: { label: 'Password', type: 'password' }
				},
				async authorize(input) {
					const parsed = credentials.safeParse(input);
					if (!parsed.success) throw new SignInRefused('credentials');
					const result = await attemptSignIn({ ...parsed.data, clientAddress });
					if (!result.ok) throw new SignInRefused(result.code, result.retryAfter);
					return { id: result.account.id, name: result.account.name, email: result.account.email };
				}
			})
		],
		callbacks: {
			async jwt({ token, user, trigger }) {
				if (trigger === 'signIn' && user?.id) {
					const sid = await openSession(
						user.id,
						clientAddress,
						event.request.headers.get('user-agent')
					);
					return { sub: user.id, sid };
				}
				if (typeof token.sid !== 'string') return null;
				const current = await checkSession(token.sid);
				if (!current) return null; // Auth.js then clears the cookie and answers "no session"
				return {
					sub: current.id,
					sid: current.sessionId,
					name: current.name,
					email: current.email,
					username: current.username,
					roles: current.roles,
					mustChangePassword: current.mustChangePassword
				};
			},
			session({ session, token }) {
				return {
					...session,
					user: {
						...session.user,
						id: token.sub as string,
						username: token.username as string,
						roles: token.roles as Role[],
						mustChangePassword: Boolean(token.mustChangePassword)
					}
				};
			}
		},
		events: {
			async signOut(message) {
				const sid = 'token' in message ? message.token?.sid : undefined;
				if (typeof sid === 'string')
					await db().transaction((tx) => endSession(tx, sid, 'sign_out', clientAddress));
			}
		}
	};
});
