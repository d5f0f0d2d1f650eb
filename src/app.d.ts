// See https://svelte.dev/docs/kit/types#app.d.ts
import type { SessionUser } from '$lib/server/auth';

declare global {
	namespace App {
		interface Locals {
			user: SessionUser | null;
			session: import('lucia').Session | null;
			/** Why a bearer token sent to /api/ did not sign anyone in, for the 401's message. */
			tokenProblem?: { kind: 'revoked' | 'expired'; at: Date } | { kind: 'unknown' };
		}
		interface Error {
			message: string;
		}
	}
}

export {};
