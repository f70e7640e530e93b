// See https://svelte.dev/docs/kit/types#app.d.ts
import type { Principal } from '$lib/server/auth/principal';
import type { ApiError } from '$lib/server/http/problem';
import type { Logger } from '$lib/server/log';

declare global {
	namespace App {
		interface Error {
			message: string;
			status?: number;
			requestId?: string;
		}
		interface Locals {
			requestId: string;
			log: Logger;
			principal: Principal | null;
			/** Set by hooks when a page is refused for the signed-in role; the root layout answers 403. */
			forbidden?: boolean;
			/** Set by handleError when a route threw an ApiError; hooks answer with its problem. */
			apiError?: ApiError;
		}
		// interface PageData {}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
