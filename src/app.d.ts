// See https://svelte.dev/docs/kit/types#app.d.ts
import type { Role } from '$lib/roles';

declare global {
	namespace App {
		interface Locals {
			/** The signed-in user, or null for a visitor. Set once per request in hooks.server.ts. */
			user: { id: string; email: string; name: string | null; role: Role } | null;
		}
		interface Error {
			message: string;
		}
	}
}

export {};
