// Reads the caller's credentials once per request: `Authorization: Bearer …` (personal API token)
// first, else the session cookie of a signed-in browser.
import type { RequestEvent } from '@sveltejs/kit';
import { getDb } from '../db';
import type { Principal } from './principal';
import { clearSessionCookie, principalFromSession, sessionCookieName } from './sessions';
import { principalFromApiToken } from './tokens';

export type AuthResult = { principal: Principal | null; badCredentials: boolean };

export async function authenticate(event: RequestEvent): Promise<AuthResult> {
	const header = event.request.headers.get('authorization');
	if (header) {
		const m = /^Bearer\s+(\S+)\s*$/i.exec(header);
		if (!m) return { principal: null, badCredentials: true };
		const principal = await principalFromApiToken(getDb(), m[1]);
		return { principal, badCredentials: principal === null };
	}
	const cookie = event.cookies.get(sessionCookieName());
	if (cookie) {
		const principal = await principalFromSession(getDb(), cookie);
		// An ended session is not an error: the browser is simply signed out again.
		if (!principal) clearSessionCookie(event.cookies);
		return { principal, badCredentials: false };
	}
	return { principal: null, badCredentials: false };
}
