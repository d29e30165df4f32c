// See https://svelte.dev/docs/kit/types#app.d.ts
declare global {
	namespace App {
		interface Error {
			message: string;
			code?: string;
			details?: unknown;
		}
		interface Locals {
			user: import('lucia').User | null;
			session: import('lucia').Session | null;
			/** X-Request-Id: in the response header, the log lines and the outbox rows. */
			requestId: string;
		}
	}
}

export {};
