// See https://svelte.dev/docs/kit/types#app.d.ts
import type { SessionUser } from '$lib/server/auth';

declare global {
	namespace App {
		interface Locals {
			user: SessionUser | null;
			session: import('lucia').Session | null;
		}
		interface Error {
			message: string;
		}
	}
}

export {};
