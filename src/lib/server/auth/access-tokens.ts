// JWT access tokens for OAuth clients (RFC 9068 "JWT Profile for OAuth 2.0 Access Tokens"):
// header `typ: at+jwt`, claims iss, aud, sub, client_id, scope, exp, iat, jti; signed with keys.ts.
import { randomUUID } from 'node:crypto';
import { errors } from 'jose';
import type { Kysely } from 'kysely';
import { ROLE_SCOPES, type Scope } from '$lib/domain/scopes';
import { config } from '../config';
import type { Database, OAuthClient } from '../db/schema';
import { signJwt, verifyJwt } from '../keys';
import { activeClient } from './oauth-clients';
import type { Principal } from './principal';

export const ACCESS_TOKEN_TYP = 'at+jwt';

export const tokenIssuer = () => config.origin.replace(/\/$/, '');
export const tokenAudience = () => `${tokenIssuer()}/api/v1`;

/** Does this bearer value have the shape of a JWS compact serialization (three base64url parts)? */
export function looksLikeJwt(value: string): boolean {
	return value.length < 4096 && /^[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+$/.test(value);
}

export async function issueAccessToken(
	db: Kysely<Database>,
	client: OAuthClient,
	scopes: Scope[]
): Promise<{ accessToken: string; expiresIn: number; scope: string }> {
	const expiresIn = config.accessTokenTtlSeconds;
	const scope = scopes.join(' ');
	const accessToken = await signJwt(
		{
			iss: tokenIssuer(),
			aud: tokenAudience(),
			sub: client.client_id,
			client_id: client.client_id,
			scope,
			jti: randomUUID()
		},
		{ typ: ACCESS_TOKEN_TYP, expiresInSeconds: expiresIn },
		db
	);
	return { accessToken, expiresIn, scope };
}

/**
 * The principal of a valid access token, or null when the signature, key, issuer, audience, type or
 * expiry is wrong, or the client has been revoked since. Scopes are those of the token that the client
 * (and the district role) still holds.
 */
export async function principalFromAccessToken(db: Kysely<Database>, token: string): Promise<Principal | null> {
	let payload;
	try {
		({ payload } = await verifyJwt(
			token,
			{ issuer: tokenIssuer(), audience: tokenAudience(), typ: ACCESS_TOKEN_TYP, requiredClaims: ['exp', 'iat', 'jti', 'sub'] },
			db
		));
	} catch (e) {
		// Bad signature, unknown or retired key, wrong claims, expired: not a valid token. Anything
		// else (the database is down) propagates, so the caller answers 503 rather than 401.
		if (e instanceof errors.JOSEError) return null;
		throw e;
	}
	const clientId = typeof payload.client_id === 'string' ? payload.client_id : null;
	if (!clientId || payload.sub !== clientId || typeof payload.scope !== 'string') return null;
	const client = await activeClient(db, clientId);
	if (!client) return null;
	const allowed = ROLE_SCOPES.district;
	const scopes = payload.scope.split(' ').filter((s): s is Scope => allowed.includes(s as Scope) && client.scopes.includes(s));
	return {
		kind: 'client',
		userId: null,
		email: null,
		name: client.name,
		role: 'district',
		districtId: client.district_id,
		scopes,
		credentialId: client.client_id,
		expiresAt: new Date((payload.exp as number) * 1000)
	};
}
