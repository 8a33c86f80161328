import type { Locale } from '$lib/i18n';
import type { SessionUser, SessionInfo } from '$lib/server/auth/types';

declare global {
	namespace App {
		interface Locals {
			requestId: string;
			locale: Locale;
			/** The signed-in person or service account; null when signed out. */
			user: SessionUser | null;
			/** The browser session; null when signed out or authenticated by an API token. */
			session: SessionInfo | null;
		}
		interface Error {
			message: string;
			requestId?: string;
			issues?: { path: string; message: string }[];
		}
		interface PageData {
			locale: Locale;
		}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
