// See https://svelte.dev/docs/kit/types#app.d.ts
declare global {
	namespace App {
		interface Error {
			message: string;
			/** Quoted to support: the server log has the details under this id. */
			errorId?: string;
		}
		interface Locals {
			/** The signed-in person, checked against the server-side session on this request. */
			user: import('$lib/server/auth/guard').User | null;
			/** Set by hooks.server.ts for every request; carried into logs. */
			requestId: string;
			/** The plant system's API token, on the token-only routes (9/10; guard.ts). */
			token?: import('$lib/server/api-tokens').TokenActor;
			/** Set by handleError so that API responses can carry the same id. */
			errorId?: string;
		}
		interface PageData {
			site?: { name: string; code: string; timeZone: string };
		}
		namespace Superforms {
			/** A form-level message: what happened, in words, and whether it went wrong. */
			type Message = { kind: 'error' | 'ok'; text: string };
		}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
