import { fail, redirect } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { signInSchema } from '$lib/schemas/accounts';
import { signIn, SignInRefused } from '$lib/server/auth/index';
import type { Actions, PageServerLoad } from './$types';

/** What the person is told for each refusal code (the code also arrives as ?code= from direct posts). */
function refusal(code: string | undefined, retryAfter?: number) {
	if (code === 'locked') {
		return {
			status: 423,
			text: 'This account is locked after too many failed sign-ins. An administrator must unlock it; the administrators have been told.'
		};
	}
	if (code === 'throttled') {
		const wait = retryAfter
			? ` Wait ${retryAfter} s, then try again.`
			: ' Wait a moment, then try again.';
		return { status: 429, text: `Too many sign-in attempts.${wait}` };
	}
	return { status: 401, text: 'Username or password is incorrect.' };
}

/** Only paths on this site, never another origin. */
function localPath(value: string | null) {
	if (!value) return '/';
	// Parse as a browser would (backslashes, tabs and all); keep it only when it stays on this site.
	const base = 'http://countersign.invalid';
	try {
		const url = new URL(value, base);
		return url.origin === base ? url.pathname + url.search : '/';
	} catch {
		return '/';
	}
}

export const load: PageServerLoad = async ({ locals, url }) => {
	if (locals.user) redirect(303, localPath(url.searchParams.get('callbackUrl')));
	const form = await superValidate(zod4(signInSchema));
	form.data.redirectTo = localPath(url.searchParams.get('callbackUrl'));
	const code =
		url.searchParams.get('code') ?? (url.searchParams.get('error') ? 'credentials' : null);
	const notice = url.searchParams.has('changed')
		? 'Your password is changed. Sign in with the new one.'
		: url.searchParams.has('signedOut')
			? 'You are signed out.'
			: null;
	if (code) form.message = { kind: 'error', text: refusal(code).text };
	else if (notice) form.message = { kind: 'ok', text: notice };
	return { form };
};

export const actions: Actions = {
	default: async (event) => {
		// Auth.js reads the original body; validate a copy of it first.
		const form = await superValidate(await event.request.clone().formData(), zod4(signInSchema));
		form.data.password = ''; // never send a password back to the browser
		if (!form.valid) return fail(400, { form });
		form.data.redirectTo = localPath(form.data.redirectTo);
		try {
			await signIn(event); // redirects (303) on success
		} catch (e) {
			if (e instanceof SignInRefused) {
				const { status, text } = refusal(e.code, e.retryAfter);
				if (e.retryAfter) event.setHeaders({ 'retry-after': String(e.retryAfter) });
				return message(form, { kind: 'error', text }, { status: status as 401 });
			}
			throw e;
		}
	}
};
