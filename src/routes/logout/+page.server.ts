import { redirect } from '@sveltejs/kit';
import { signOut } from '$lib/server/auth/index';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = () => redirect(303, '/');

export const actions: Actions = {
	/** Ends the server-side session (Auth.js's signOut event) and clears the cookie. */
	default: async (event) => {
		if (!event.locals.user) redirect(303, '/login');
		await signOut(event);
	}
};
