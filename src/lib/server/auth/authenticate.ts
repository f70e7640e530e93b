// Reads the caller's credentials once per request: `Authorization: Bearer …` (personal API token,
// or a JWT access token of an OAuth client).
import type { RequestEvent } from '@sveltejs/kit';
import { getDb } from '../db';
import { looksLikeJwt, principalFromAccessToken } from './access-tokens';
import type { Principal } from './principal';
import { principalFromApiToken, TOKEN_PREFIX } from './tokens';

export type AuthResult = { principal: Principal | null; badCredentials: boolean };

export async function authenticate(event: RequestEvent): Promise<AuthResult> {
	const header = event.request.headers.get('authorization');
	if (header) {
		// HTTP Basic is the OAuth token endpoint's client authentication, not a credential for other routes.
		if (/^Basic\s/i.test(header)) return { principal: null, badCredentials: false };
		const m = /^Bearer\s+(\S+)\s*$/i.exec(header);
		if (!m) return { principal: null, badCredentials: true };
		// OAuth client access token (RFC 9068 JWT), verified against our signing keys.
		if (!m[1].startsWith(TOKEN_PREFIX) && looksLikeJwt(m[1])) {
			const principal = await principalFromAccessToken(getDb(), m[1]);
			return { principal, badCredentials: principal === null };
		}
		const principal = await principalFromApiToken(getDb(), m[1]);
		return { principal, badCredentials: principal === null };
	}
	return { principal: null, badCredentials: false };
}
