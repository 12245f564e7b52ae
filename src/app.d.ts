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
			requestId: string;
		}
		// interface PageData {}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
