// See https://svelte.dev/docs/kit/types#app.d.ts
declare global {
	namespace App {
		interface Error {
			message: string;
			/** Quoted to support: the server log has the details under this id. */
			errorId?: string;
		}
		interface Locals {
			/** Set by hooks.server.ts for every request; carried into logs. */
			requestId: string;
			/** Set by handleError so that API responses can carry the same id. */
			errorId?: string;
		}
		interface PageData {
			site?: { name: string; code: string; timeZone: string };
		}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
