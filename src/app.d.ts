// See https://svelte.dev/docs/kit/types#app.d.ts
import type { Role } from '$lib/server/db/schema';

declare global {
	namespace App {
		interface Error {
			message: string;
			code?: string;
			/** Id of the logged server error, shown to the user instead of details. */
			id?: string;
		}
		interface Locals {
			user: {
				id: number;
				email: string;
				name: string;
				role: Role;
			} | null;
			session: import('lucia').Session | null;
			/** How the request was authenticated. */
			authVia: 'session' | 'token' | null;
			tokenId: number | null;
			/**
			 * Two-step sign-in of this request: 'none' (not on for the user), 'pending' (a session
			 * signed in with the password whose code is still missing: only /signin/code and sign-out
			 * are reachable) or 'verified' (the session gave the code; for a token: its owner has
			 * two-step sign-in on). Admin-only routes need 'verified' (guard.ts).
			 */
			secondFactor: 'none' | 'pending' | 'verified';
			requestId: string;
		}
		// interface PageData {}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
