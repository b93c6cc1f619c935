import type { SessionUser } from '$lib/server/auth/lucia';
import type { Session } from 'lucia';

declare global {
	namespace App {
		interface Locals {
			user: SessionUser | null;
			session: Session | null;
			requestId: string;
		}
		interface Error {
			message: string;
		}
	}
}

export {};
