import type { UserRow } from '$lib/server/identity/repo';
import type { Role } from '$lib/server/identity/roles';
import type { MemberOf } from '$lib/server/identity/service';

declare global {
	namespace App {
		interface Error {
			message: string;
			errorId?: string;
			fields?: Record<string, string>;
		}
		interface Locals {
			user: UserRow | null;
			/** A session user's projects and roles, read with the user (null for API tokens). */
			memberships: MemberOf[] | null;
			/** Set when the request authenticated with a personal API token. */
			apiToken: { id: number; projectId: number; role: Role } | null;
			requestId: string;
			/** Set by handleError when a load or action failed because PostgreSQL is unreachable. */
			databaseUnavailable: boolean;
		}
		// interface PageData {}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
